// Framers cut a byte stream, fed in arbitrary chunks, into records (DESIGN.md section 2):
// lines, or u16be/u32be length-prefixed frames. A record that lies within one chunk is handed
// out as a view into that chunk (no copy); only a record split across chunks is carried over
// in an internal buffer of at most max_record_bytes. Pure code, no sockets.
#pragma once

#include <cstdint>
#include <string>
#include <string_view>
#include <type_traits>
#include <utility>

namespace codedrift {

// What happens to a line longer than max_record_bytes.
enum class OverlongPolicy {
  kTruncate,  // emit its first max_record_bytes bytes once (no newline added), skip the rest
  kDrop,      // emit nothing for it
};

enum class LengthPrefix { kU16be, kU32be };

// Per-framer tallies; the daemon maps them to metrics. Plain value type.
struct FramerCounters {
  uint64_t records = 0;             // records emitted (truncated and unterminated included)
  uint64_t overlong_truncated = 0;  // lines cut to max_record_bytes
  uint64_t overlong_dropped = 0;    // lines discarded for length
  uint64_t unterminated = 0;        // final line without newline emitted at Finish
  uint64_t oversized_frame = 0;     // length prefix above max_record_bytes (framing lost)
  uint64_t truncated_frame = 0;     // stream ended inside a frame (header or body)
};

// A non-owning reference to a callable taking one record. The record view is valid only
// during the call. Cheap to copy; must not outlive the callable it refers to.
class RecordSink {
 public:
  template <class F>
  requires(!std::is_same_v<std::remove_cvref_t<F>, RecordSink> &&
           std::is_invocable_v<F&, std::string_view>)
      RecordSink(F&& callable)  // NOLINT(google-explicit-constructor)
      : object_(const_cast<void*>(static_cast<const void*>(&callable))),
        call_([](void* object, std::string_view record) {
          (*static_cast<std::remove_reference_t<F>*>(object))(record);
        }) {}

  void operator()(std::string_view record) const { call_(object_, record); }

 private:
  void* object_;
  void (*call_)(void*, std::string_view);
};

// Line framing: a record is the bytes up to and including '\n'. A line (newline included)
// longer than max_record_bytes is overlong and handled per OverlongPolicy; a truncated
// record is its first max_record_bytes bytes, without a newline. At Finish, a final line
// without newline is emitted as it is (no newline added) and counted as unterminated.
// One instance per connection; not thread-safe.
class LineFramer {
 public:
  // max_record_bytes >= 1.
  LineFramer(uint32_t max_record_bytes, OverlongPolicy overlong);

  void Feed(std::string_view chunk, RecordSink sink);
  // The fast path for chunks of many lines: when no partial line is pending, takes the longest
  // prefix of `chunk` made of whole lines that each fit max_record_bytes, counts them as
  // records (into `records` and counters()) and returns the prefix's length. Feed must take
  // what follows it. Scans 64 bytes per step with no call per line.
  size_t TakeWholeLines(std::string_view chunk, uint64_t& records);
  // Feed for chunks of many lines: each run of whole lines goes to run(text, records) in one
  // call, everything else (the end of a line begun in an earlier chunk, an overlong line, a
  // partial last line) to `sink` one record at a time, in stream order. Records and counters
  // are those Feed alone gives.
  template <class RunFn>
  void FeedRuns(std::string_view chunk, RecordSink sink, RunFn&& run) {
    while (!chunk.empty()) {
      uint64_t records = 0;
      const size_t whole = TakeWholeLines(chunk, records);
      if (records > 0) run(chunk.substr(0, whole), records);
      chunk.remove_prefix(whole);
      if (chunk.empty()) break;
      const size_t newline = chunk.find('\n');
      const size_t piece = newline == std::string_view::npos ? chunk.size() : newline + 1;
      Feed(chunk.substr(0, piece), sink);
      chunk.remove_prefix(piece);
    }
  }
  // The stream ended: emits an unterminated final line, then resets for reuse.
  void Finish(RecordSink sink);

  const FramerCounters& counters() const { return counters_; }
  // Bytes of a partial record waiting for the rest of its line.
  size_t buffered_bytes() const { return carry_.size(); }

 private:
  void Emit(std::string_view record, RecordSink sink);
  void Overlong(std::string_view prefix, RecordSink sink);

  uint32_t max_record_bytes_;
  OverlongPolicy overlong_;
  std::string carry_;        // start of a record split across chunks
  bool discarding_ = false;  // inside an overlong line, skipping to its newline
  FramerCounters counters_;
};

// Length-prefixed framing: each record is preceded by its length as a 2- or 4-byte
// big-endian integer (zero-length records are emitted as empty records). A length above
// max_record_bytes loses the framing: Feed returns false from then on and the caller must
// close the connection. One instance per connection; not thread-safe.
class LengthPrefixFramer {
 public:
  // max_record_bytes >= 1.
  LengthPrefixFramer(LengthPrefix prefix, uint32_t max_record_bytes);

  // Returns false once framing is lost (counted as oversized_frame); later calls do nothing.
  bool Feed(std::string_view chunk, RecordSink sink);
  // The stream ended: counts truncated_frame if it ended inside a frame, then resets for reuse.
  void Finish();

  bool failed() const { return failed_; }
  const FramerCounters& counters() const { return counters_; }
  size_t buffered_bytes() const { return header_size_ + carry_.size(); }

 private:
  int prefix_bytes_;
  uint32_t max_record_bytes_;
  unsigned char header_[4] = {};
  int header_size_ = 0;     // header bytes of the next frame seen so far
  bool in_body_ = false;    // header complete, body split across chunks
  uint32_t body_size_ = 0;  // length of the frame being carried
  std::string carry_;
  bool failed_ = false;
  FramerCounters counters_;
};

}  // namespace codedrift
