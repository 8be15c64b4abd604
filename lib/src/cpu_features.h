// The CPU features the library's vector paths choose at run time (it is built for baseline
// x86-64): AVX2 with POPCNT and BMI1, which every AVX2 CPU has.
#pragma once

namespace codedrift {

inline bool CpuHasAvx2() {
#if defined(__x86_64__)
  static const bool has = __builtin_cpu_supports("avx2") && __builtin_cpu_supports("popcnt") &&
                          __builtin_cpu_supports("bmi");
  return has;
#else
  return false;
#endif
}

}  // namespace codedrift
