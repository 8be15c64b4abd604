// Checkpoint pieces that are not bytes: a model's identity, the two clocks, code state
// snapshots.
#include <cstdio>
#include <string>

#include "codedrift/checkpoint.h"

namespace codedrift {
namespace {

const char* OrderName(FieldOrder order) { return order == FieldOrder::kBig ? "big" : "little"; }

const char* TransformName(FieldTransform transform) {
  switch (transform) {
    case FieldTransform::kNone:
      return "none";
    case FieldTransform::kDelta:
      return "delta";
    case FieldTransform::kXor:
      return "xor";
  }
  return "?";
}

// Delimiters as hex, so that any byte (a space, '=') reads unambiguously.
std::string Hex(std::string_view bytes) {
  std::string out;
  char text[3];
  for (const char c : bytes) {
    std::snprintf(text, sizeof text, "%02x", static_cast<unsigned char>(c));
    out += text;
  }
  return out;
}

std::string SymbolsText(const SymbolizerSpec& s) {
  switch (s.kind) {
    case AlphabetKind::kBytes:
      return "bytes block=" + std::to_string(s.block);
    case AlphabetKind::kTokens:
      return "tokens delimiters=" + Hex(s.tokens.delimiters) +
             " mask_digits=" + (s.tokens.mask_digits ? "true" : "false") +
             " max_distinct=" + std::to_string(s.tokens.max_distinct);
    case AlphabetKind::kField:
      return "field offset_bits=" + std::to_string(s.field.offset_bits) +
             " width_bits=" + std::to_string(s.field.width_bits) +
             " order=" + OrderName(s.field.order) +
             " transform=" + TransformName(s.field.transform);
  }
  return "?";
}

}  // namespace

std::string ModelIdentity(std::string_view stream, std::string_view model,
                          const SymbolizerSpec& symbolizer, const WindowSpec& window) {
  std::string text = "stream=" + std::string(stream) + " model=" + std::string(model) +
                     " symbols=" + SymbolsText(symbolizer) + " window=";
  if (window.by_time()) {
    text += "span " + std::to_string(window.span.count()) + "ns buckets " +
            std::to_string(window.buckets);
  } else {
    text += "symbols " + std::to_string(window.symbols);
  }
  return text;
}

CheckpointTime CheckpointTimeNow(const Clock& steady) {
  return CheckpointTime{.unix_ns = std::chrono::duration_cast<std::chrono::nanoseconds>(
                                       std::chrono::system_clock::now().time_since_epoch())
                                       .count(),
                        .steady_ns = steady.Now().count()};
}

std::chrono::nanoseconds SteadyShift(const CheckpointTime& written, const CheckpointTime& now) {
  const int64_t elapsed = std::max<int64_t>(now.unix_ns - written.unix_ns, 0);
  return std::chrono::nanoseconds(now.steady_ns - elapsed - written.steady_ns);
}

CodeStateSnapshot SnapshotOf(const CodeStateMachine& machine) {
  return CodeStateSnapshot{.state = machine.state(),
                           .entered_at = machine.entered_at(),
                           .condition_since = machine.condition_since(),
                           .last_alert = machine.last_alert(),
                           .alerts = machine.alerts()};
}

void RestoreFrom(const CodeStateSnapshot& snapshot, CodeStateMachine& machine) {
  machine.Restore(snapshot.state, snapshot.entered_at, snapshot.condition_since,
                  snapshot.last_alert, snapshot.alerts);
}

void ShiftSteadyTimes(ModelCheckpoint& checkpoint, std::chrono::nanoseconds shift) {
  checkpoint.written.steady_ns += shift.count();
  checkpoint.evaluator.last_at += shift;
  if (checkpoint.model.window.kind == WindowStateKind::kBuckets) {
    checkpoint.model.window.newest_bucket_start += shift;
  }
  CodeStateSnapshot& s = checkpoint.code_state;
  s.entered_at += shift;
  if (s.condition_since) *s.condition_since += shift;
  if (s.last_alert) *s.last_alert += shift;
}

}  // namespace codedrift
