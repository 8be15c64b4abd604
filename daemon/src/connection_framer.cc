#include "connection_framer.h"

#include <atomic>
#include <cstdint>
#include <string_view>

namespace codedrift {

bool ConnectionFramer::Feed(std::string_view chunk, const RecordHandler& handler,
                            const RunHandler& run_handler) {
  if (auto* lines = std::get_if<LineFramer>(&framer_)) {
    if (!run_handler) {
      lines->Feed(chunk, handler);
      return true;
    }
    lines->FeedRuns(chunk, handler, run_handler);
    return true;
  }
  return std::get<LengthPrefixFramer>(framer_).Feed(chunk, handler);
}

void ConnectionFramer::Finish(const RecordHandler& handler) {
  if (auto* lines = std::get_if<LineFramer>(&framer_)) {
    lines->Finish(handler);
  } else {
    std::get<LengthPrefixFramer>(framer_).Finish();
  }
}

void ConnectionFramer::Publish(StreamCounters& out) {
  const FramerCounters& now = std::visit(
      [](const auto& framer) -> const FramerCounters& { return framer.counters(); }, framer_);
  const auto add = [](std::atomic<uint64_t>& to, uint64_t delta) {
    if (delta != 0) to.fetch_add(delta, std::memory_order_relaxed);
  };
  add(out.records_total, now.records - published_.records);
  const uint64_t overlong = now.overlong_truncated + now.overlong_dropped;
  const uint64_t published_overlong = published_.overlong_truncated + published_.overlong_dropped;
  if (overlong != published_overlong) {
    out.Add(RecordRejectReason::kOverlong, overlong - published_overlong);
  }
  if (now.oversized_frame != published_.oversized_frame) {
    out.Add(RecordRejectReason::kOversizedFrame, now.oversized_frame - published_.oversized_frame);
  }
  if (now.truncated_frame != published_.truncated_frame) {
    out.Add(RecordRejectReason::kTruncatedFrame, now.truncated_frame - published_.truncated_frame);
  }
  published_ = now;
}

ConnectionFramer::Framer ConnectionFramer::Make(const StreamConfig& config) {
  switch (config.framing) {
    case Framing::kU16be:
      return LengthPrefixFramer(LengthPrefix::kU16be, config.max_record_bytes);
    case Framing::kU32be:
      return LengthPrefixFramer(LengthPrefix::kU32be, config.max_record_bytes);
    case Framing::kLines:
    case Framing::kDatagram:  // the config refuses datagram framing on stream sockets
      break;
  }
  return LineFramer(config.max_record_bytes, config.overlong);
}

}  // namespace codedrift
