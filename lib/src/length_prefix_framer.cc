#include <algorithm>

#include "codedrift/framer.h"

namespace codedrift {
namespace {

uint32_t ReadBigEndian(const unsigned char* bytes, int size) {
  uint32_t value = 0;
  for (int i = 0; i < size; ++i) value = (value << 8) | bytes[i];
  return value;
}

}  // namespace

LengthPrefixFramer::LengthPrefixFramer(LengthPrefix prefix, uint32_t max_record_bytes)
    : prefix_bytes_(prefix == LengthPrefix::kU16be ? 2 : 4),
      max_record_bytes_(std::max<uint32_t>(max_record_bytes, 1)) {}

bool LengthPrefixFramer::Feed(std::string_view chunk, RecordSink sink) {
  if (failed_) return false;
  const auto* data = reinterpret_cast<const unsigned char*>(chunk.data());
  const size_t size = chunk.size();
  size_t pos = 0;
  while (pos < size) {
    if (in_body_) {
      const size_t take = std::min<size_t>(body_size_ - carry_.size(), size - pos);
      carry_.append(chunk.data() + pos, take);
      pos += take;
      if (carry_.size() < body_size_) return true;
      ++counters_.records;
      sink(carry_);
      carry_.clear();
      in_body_ = false;
      continue;
    }
    uint32_t length = 0;
    if (header_size_ == 0 && size - pos >= static_cast<size_t>(prefix_bytes_)) {
      length = ReadBigEndian(data + pos, prefix_bytes_);  // whole header in this chunk
      pos += prefix_bytes_;
    } else {
      const size_t take = std::min<size_t>(prefix_bytes_ - header_size_, size - pos);
      std::copy_n(data + pos, take, header_ + header_size_);
      header_size_ += static_cast<int>(take);
      pos += take;
      if (header_size_ < prefix_bytes_) return true;
      length = ReadBigEndian(header_, prefix_bytes_);
      header_size_ = 0;
    }
    if (length > max_record_bytes_) {
      // The peer's framing cannot be trusted past this point: no resynchronisation.
      ++counters_.oversized_frame;
      failed_ = true;
      return false;
    }
    if (size - pos >= length) {
      ++counters_.records;
      sink(chunk.substr(pos, length));  // whole body in this chunk: no copy
      pos += length;
      continue;
    }
    body_size_ = length;
    carry_.reserve(length);
    in_body_ = true;
  }
  return true;
}

void LengthPrefixFramer::Finish() {
  if (!failed_ && (header_size_ > 0 || in_body_)) ++counters_.truncated_frame;
  header_size_ = 0;
  in_body_ = false;
  body_size_ = 0;
  carry_.clear();
  failed_ = false;
}

}  // namespace codedrift
