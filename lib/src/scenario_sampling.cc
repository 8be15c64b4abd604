#include "codedrift/scenario_sampling.h"

#include <algorithm>
#include <cmath>
#include <limits>

namespace codedrift::sampling {
namespace {

constexpr double kInvSqrt2 = 0.70710678118654752440;
constexpr double kInvSqrt2Pi = 0.39894228040143267794;

// Rational approximation of Φ^-1 (relative error about 1e-9) in three pieces: a central one
// and one for each tail. Only a starting point: NormalQuantile polishes it on Φ itself.
double QuantileGuess(double p) {
  static constexpr double kA[] = {-3.969683028665376e+01, 2.209460984245205e+02,
                                  -2.759285104469687e+02, 1.383577518672690e+02,
                                  -3.066479806614716e+01, 2.506628277459239e+00};
  static constexpr double kB[] = {-5.447609879822406e+01, 1.615858368580409e+02,
                                  -1.556989798598866e+02, 6.680131188771972e+01,
                                  -1.328068155288572e+01};
  static constexpr double kC[] = {-7.784894002430293e-03, -3.223964580411365e-01,
                                  -2.400758277161838e+00, -2.549732539343734e+00,
                                  4.374664141464968e+00,  2.938163982698783e+00};
  static constexpr double kD[] = {7.784695709041462e-03, 3.224671290700398e-01,
                                  2.445134137142996e+00, 3.754408661907416e+00};
  constexpr double kTail = 0.02425;
  if (p < kTail || p > 1 - kTail) {
    const double q = std::sqrt(-2 * std::log(p < kTail ? p : 1 - p));
    const double x = (((((kC[0] * q + kC[1]) * q + kC[2]) * q + kC[3]) * q + kC[4]) * q + kC[5]) /
                     ((((kD[0] * q + kD[1]) * q + kD[2]) * q + kD[3]) * q + 1);
    return p < kTail ? x : -x;
  }
  const double q = p - 0.5;
  const double r = q * q;
  return (((((kA[0] * r + kA[1]) * r + kA[2]) * r + kA[3]) * r + kA[4]) * r + kA[5]) * q /
         (((((kB[0] * r + kB[1]) * r + kB[2]) * r + kB[3]) * r + kB[4]) * r + 1);
}

}  // namespace

double Uniform01(std::mt19937_64& engine) {
  return static_cast<double>(engine() >> 11) * 0x1.0p-53;
}

uint64_t UniformIndex(std::mt19937_64& engine, uint64_t n) {
  __extension__ typedef unsigned __int128 Wide;
  return static_cast<uint64_t>((static_cast<Wide>(engine()) * n) >> 64);
}

double NormalCdf(double x) { return 0.5 * std::erfc(-x * kInvSqrt2); }

double NormalQuantile(double p) {
  if (!(p > 0)) return -std::numeric_limits<double>::infinity();
  if (!(p < 1)) return std::numeric_limits<double>::infinity();
  double x = QuantileGuess(p);
  // Newton on Φ(x) = p. In the upper tail compare complements (1 - Φ(x) = Φ(-x)), which
  // keep their precision where Φ(x) itself rounds to 1.
  for (int i = 0; i < 2; ++i) {
    const double density = kInvSqrt2Pi * std::exp(-0.5 * x * x);
    if (density == 0) break;
    const double error = p > 0.5 ? (1 - p) - NormalCdf(-x) : NormalCdf(x) - p;  // Φ(x) - p
    x -= error / density;
  }
  return x;
}

TruncatedNormal::TruncatedNormal(double mean, double sd, double low, double high)
    : mean_(mean),
      sd_(sd),
      low_(low),
      high_(high),
      cdf_low_(NormalCdf((low - mean) / sd)),
      cdf_high_(NormalCdf((high - mean) / sd)) {}

double TruncatedNormal::Draw(std::mt19937_64& engine) const {
  const double u = Uniform01(engine);
  // When the whole interval sits far in a tail its Φ values coincide; the interval is then
  // tiny in sd units and uniform on it is as good as exact.
  if (!(cdf_high_ > cdf_low_)) return low_ + u * (high_ - low_);
  const double x = mean_ + sd_ * NormalQuantile(cdf_low_ + u * (cdf_high_ - cdf_low_));
  return std::clamp(x, low_, high_);
}

WeightedPick::WeightedPick(std::span<const double> weights) {
  cumulative_.reserve(weights.size());
  double total = 0;
  for (const double weight : weights) {
    total += weight;
    cumulative_.push_back(total);
  }
}

size_t WeightedPick::Pick(std::mt19937_64& engine) const {
  if (cumulative_.size() <= 1) return 0;
  const double target = Uniform01(engine) * cumulative_.back();
  // The first index whose cumulative weight exceeds the target.
  const auto it = std::upper_bound(cumulative_.begin(), cumulative_.end(), target);
  return std::min(static_cast<size_t>(it - cumulative_.begin()), cumulative_.size() - 1);
}

}  // namespace codedrift::sampling
