#include "codedrift/entropy.h"

#include <cmath>
#include <numbers>

namespace codedrift {
namespace {

// Neumaier-compensated sum in long double: windows reach billions of symbols and hundreds of
// thousands of distinct keys, and H = log2 N - S / N subtracts two numbers of similar size, so
// the error in S must stay far below one ulp of log2 N.
class CompensatedSum {
 public:
  void Add(long double x) {
    const long double t = sum_ + x;
    if (std::fabs(sum_) >= std::fabs(x)) {
      compensation_ += (sum_ - t) + x;
    } else {
      compensation_ += (x - t) + sum_;
    }
    sum_ = t;
  }
  long double value() const { return sum_ + compensation_; }

 private:
  long double sum_ = 0;
  long double compensation_ = 0;
};

struct Tally {
  uint64_t symbols = 0;
  uint64_t distinct = 0;
  long double c_log_c = 0;  // sum of c log2 c over nonzero counts
};

Tally TallyCounts(std::span<const uint64_t> counts) {
  Tally tally;
  CompensatedSum c_log_c;
  for (const uint64_t c : counts) {
    if (c == 0) continue;
    tally.symbols += c;
    ++tally.distinct;
    if (c > 1) {
      const auto lc = static_cast<long double>(c);
      c_log_c.Add(lc * std::log2(lc));
    }
  }
  tally.c_log_c = c_log_c.value();
  return tally;
}

long double PluginFromTally(const Tally& tally) {
  // One symbol (or none) carries no information; return an exact zero rather than the
  // rounding residue of log2 N - (N log2 N) / N.
  if (tally.distinct <= 1) return 0;
  const auto n = static_cast<long double>(tally.symbols);
  const long double h = std::log2(n) - tally.c_log_c / n;
  return h < 0 ? 0 : h;
}

}  // namespace

double PluginEntropyBits(std::span<const uint64_t> counts) {
  return static_cast<double>(PluginFromTally(TallyCounts(counts)));
}

EntropyEstimate EstimateEntropy(std::span<const uint64_t> counts) {
  const Tally tally = TallyCounts(counts);
  EntropyEstimate estimate;
  estimate.symbols = tally.symbols;
  estimate.distinct = tally.distinct;
  if (tally.symbols == 0) return estimate;

  const long double h = PluginFromTally(tally);
  const auto n = static_cast<long double>(tally.symbols);
  estimate.plugin_bits = static_cast<double>(h);
  estimate.miller_madow_bits =
      static_cast<double>(h + static_cast<long double>(tally.distinct - 1) /
                                  (2 * n * std::numbers::ln2_v<long double>));

  // sum p (log2 p)^2 - H^2 equals sum p (log2 p + H)^2; the second form is a sum of
  // nonnegative terms, so it cannot cancel to a negative variance when p is nearly uniform.
  if (tally.distinct > 1) {
    CompensatedSum spread;
    const long double log2_n = std::log2(n);
    for (const uint64_t c : counts) {
      if (c == 0) continue;
      const auto lc = static_cast<long double>(c);
      const long double deviation = std::log2(lc) - log2_n + h;  // log2 p + H
      spread.Add(lc / n * deviation * deviation);
    }
    const long double variance = spread.value();
    estimate.stderr_bits = static_cast<double>(std::sqrt(variance > 0 ? variance / n : 0));
  }
  return estimate;
}

double BinaryEntropyBits(double p) {
  if (!(p > 0) || !(p < 1)) return 0;
  // Evaluate on the smaller of p and 1 - p, with log1p for the larger, so h(p) == h(1 - p)
  // and small p keep full relative precision.
  const long double q = p <= 0.5 ? p : 1.0L - static_cast<long double>(p);
  const long double h =
      -(q * std::log2(q)) - (1 - q) * std::log1p(-q) / std::numbers::ln2_v<long double>;
  return static_cast<double>(h);
}

bool TooFewSymbols(uint64_t symbols, uint64_t distinct) {
  // An empty window supports no estimate at all. Otherwise N < 10 K, written as
  // floor(N / 10) < K so that 10 K cannot overflow.
  if (symbols == 0) return true;
  return symbols / 10 < distinct;
}

}  // namespace codedrift
