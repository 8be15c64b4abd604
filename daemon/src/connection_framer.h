// ConnectionFramer: the framer of one stream connection, chosen by the stream's framing, and
// the bookkeeping that turns its per-instance tallies into the stream's counters.
#pragma once

#include <string_view>
#include <variant>

#include "codedrift/daemon_config.h"
#include "codedrift/framer.h"

#include "stream_counters.h"
#include "stream_listener.h"

namespace codedrift {

// The framer of one connection and the part of its tallies already added to the stream's
// counters (framers count per instance; the stream counts per listener). Not thread-safe: one
// connection's strand uses it.
class ConnectionFramer {
 public:
  explicit ConnectionFramer(const StreamConfig& config) : framer_(Make(config)) {}

  // Returns false once the framing is lost (oversized length prefix). With `run_handler` set,
  // whole lines lying back to back in `chunk` go to it as runs (lines framing only).
  bool Feed(std::string_view chunk, const RecordHandler& handler,
            const RunHandler& run_handler = nullptr);
  // The connection ended: delivers an unterminated last line, counts a cut-off frame.
  void Finish(const RecordHandler& handler);

  // Adds what the framer counted since the last call: a few atomics per chunk, not per record.
  void Publish(StreamCounters& out);

 private:
  using Framer = std::variant<LineFramer, LengthPrefixFramer>;

  static Framer Make(const StreamConfig& config);

  Framer framer_;
  FramerCounters published_;
};

}  // namespace codedrift
