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
    // Whole lines inside `chunk` follow one another with no gap, so a run is a start, an end
    // and a count. A line completed from earlier chunks (in the framer's carry buffer) or a
    // truncated one ends the run and goes out on its own, so the order is kept.
    const auto chunk_begin = reinterpret_cast<uintptr_t>(chunk.data());
    const uintptr_t chunk_end = chunk_begin + chunk.size();
    const char* run_begin = nullptr;
    const char* run_end = nullptr;
    uint64_t run_records = 0;
    const auto flush = [&] {
      if (run_records == 0) return;
      run_handler(std::string_view(run_begin, static_cast<size_t>(run_end - run_begin)),
                  run_records);
      run_records = 0;
    };
    lines->Feed(chunk, [&](std::string_view record) {
      const auto at = reinterpret_cast<uintptr_t>(record.data());
      const bool whole_in_chunk = at >= chunk_begin && at + record.size() <= chunk_end &&
                                  !record.empty() && record.back() == '\n';
      if (!whole_in_chunk) {
        flush();
        handler(record);
        return;
      }
      if (run_records == 0 || record.data() != run_end) {
        flush();
        run_begin = record.data();
      }
      run_end = record.data() + record.size();
      ++run_records;
    });
    flush();
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
