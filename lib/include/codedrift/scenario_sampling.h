// The samplers behind `codedrift synth`, written out here rather than taken from <random>:
// the standard fixes std::mt19937_64's output but leaves its distributions to each library,
// and a scenario must give the same bytes everywhere. Free functions over plain values; safe
// to call from any thread with distinct engines.
#pragma once

#include <cstdint>
#include <random>
#include <span>
#include <vector>

namespace codedrift::sampling {

// Uniform on [0, 1): the top 53 bits of one engine output.
double Uniform01(std::mt19937_64& engine);

// Uniform on {0, ..., n - 1} (n >= 1) by multiply-and-shift of one 64-bit output; the bias is
// below n / 2^64.
uint64_t UniformIndex(std::mt19937_64& engine, uint64_t n);

// Standard normal CDF Φ(x), through erfc so the tails keep their relative precision.
double NormalCdf(double x);

// Φ^-1(p) for p in (0, 1): a rational first guess refined by two Newton steps on Φ. Returns
// ±infinity at p = 0 or 1.
double NormalQuantile(double p);

// Draws from N(mean, sd²) truncated to [low, high] by inverting the CDF on the truncated
// interval: one uniform draw per value, nothing rejected. Precomputes Φ at both ends.
// Plain value type.
class TruncatedNormal {
 public:
  TruncatedNormal(double mean, double sd, double low, double high);
  double Draw(std::mt19937_64& engine) const;

 private:
  double mean_;
  double sd_;
  double low_;
  double high_;
  double cdf_low_;
  double cdf_high_;
};

// Picks index i with probability weights[i] / Σ weights by a binary search of the cumulative
// weights (inverse CDF). Weights must be finite and > 0. A single weight draws nothing from
// the engine (so a one-message scenario spends no draw on choosing it). Plain value type.
class WeightedPick {
 public:
  explicit WeightedPick(std::span<const double> weights);
  size_t Pick(std::mt19937_64& engine) const;
  size_t size() const { return cumulative_.size(); }

 private:
  std::vector<double> cumulative_;
};

}  // namespace codedrift::sampling
