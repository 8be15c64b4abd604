#include <algorithm>
#include <cstring>

#include "codedrift/framer.h"

namespace codedrift {
namespace {

// Offset of the first '\n' in data[0, size), or size when there is none. memchr is the
// vectorised scan the per-chunk budget depends on.
size_t FindNewline(const char* data, size_t size) {
  const void* hit = size == 0 ? nullptr : std::memchr(data, '\n', size);
  return hit == nullptr ? size : static_cast<size_t>(static_cast<const char*>(hit) - data);
}

}  // namespace

LineFramer::LineFramer(uint32_t max_record_bytes, OverlongPolicy overlong)
    : max_record_bytes_(std::max<uint32_t>(max_record_bytes, 1)), overlong_(overlong) {}

void LineFramer::Emit(std::string_view record, RecordSink sink) {
  ++counters_.records;
  sink(record);
}

void LineFramer::Overlong(std::string_view prefix, RecordSink sink) {
  if (overlong_ == OverlongPolicy::kTruncate) {
    ++counters_.overlong_truncated;
    Emit(prefix, sink);
  } else {
    ++counters_.overlong_dropped;
  }
  discarding_ = true;
}

void LineFramer::Feed(std::string_view chunk, RecordSink sink) {
  const char* data = chunk.data();
  const size_t size = chunk.size();
  size_t pos = 0;
  while (pos < size) {
    const char* rest = data + pos;
    const size_t left = size - pos;
    if (discarding_) {
      const size_t newline = FindNewline(rest, left);
      if (newline == left) return;  // the whole chunk belongs to the overlong line
      discarding_ = false;
      pos += newline + 1;
      continue;
    }
    // A record may hold at most `room` more bytes; a newline must appear within them.
    const size_t room = max_record_bytes_ - carry_.size();
    const size_t scan = std::min(left, room);
    const size_t newline = FindNewline(rest, scan);
    if (newline < scan) {
      if (carry_.empty()) {
        Emit(std::string_view(rest, newline + 1), sink);  // whole line in this chunk: no copy
      } else {
        carry_.append(rest, newline + 1);
        Emit(carry_, sink);
        carry_.clear();
      }
      pos += newline + 1;
      continue;
    }
    if (left <= room) {
      carry_.append(rest, left);  // the line may still end in a later chunk
      return;
    }
    // `room` bytes without a newline and more bytes follow: the line cannot fit.
    if (carry_.empty()) {
      Overlong(std::string_view(rest, room), sink);
    } else {
      carry_.append(rest, room);
      Overlong(carry_, sink);
      carry_.clear();
    }
    pos += room;
  }
}

void LineFramer::Finish(RecordSink sink) {
  if (!discarding_ && !carry_.empty()) {
    ++counters_.unterminated;
    Emit(carry_, sink);
  }
  carry_.clear();
  discarding_ = false;
}

}  // namespace codedrift
