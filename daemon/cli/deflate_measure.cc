#include "deflate_measure.h"

#include <vector>

#include <zlib.h>

namespace codedrift::cli {
namespace {

constexpr int kLevel = 6;
constexpr int kRawWindowBits = -15;  // raw deflate: no zlib header or checksum
constexpr int kMemLevel = 8;         // zlib's default

// Owns a deflate stream; compresses into a scratch buffer and counts the output.
class Deflater {
 public:
  Deflater() {
    ok_ = deflateInit2(&zs_, kLevel, Z_DEFLATED, kRawWindowBits, kMemLevel, Z_DEFAULT_STRATEGY) ==
          Z_OK;
  }
  ~Deflater() {
    if (ok_) deflateEnd(&zs_);
  }
  Deflater(const Deflater&) = delete;
  Deflater& operator=(const Deflater&) = delete;

  bool ok() const { return ok_; }

  // Feeds `length` bytes; `finish` ends the stream. Returns false on a zlib error.
  bool Feed(const char* data, size_t length, bool finish, uint64_t& compressed) {
    zs_.next_in = reinterpret_cast<Bytef*>(const_cast<char*>(data));
    zs_.avail_in = static_cast<uInt>(length);
    const int flush = finish ? Z_FINISH : Z_NO_FLUSH;
    while (true) {
      zs_.next_out = out_.data();
      zs_.avail_out = static_cast<uInt>(out_.size());
      const int rc = deflate(&zs_, flush);
      if (rc == Z_STREAM_ERROR) return false;
      compressed += out_.size() - zs_.avail_out;
      if (finish ? rc == Z_STREAM_END : (zs_.avail_in == 0 && zs_.avail_out != 0)) break;
    }
    if (finish) return deflateReset(&zs_) == Z_OK;
    return true;
  }

 private:
  z_stream zs_{};
  bool ok_ = false;
  std::vector<Bytef> out_ = std::vector<Bytef>(size_t{1} << 18);
};

}  // namespace

double DeflateMeasure::BitsPerByte() const {
  return sampled_bytes == 0
             ? 0.0
             : 8.0 * static_cast<double>(compressed_bytes) / static_cast<double>(sampled_bytes);
}

Result<DeflateMeasure> MeasureDeflate(const CaptureStream& stream, uint64_t budget_bytes) {
  DeflateMeasure measure;
  Deflater deflater;
  if (!deflater.ok()) return Error{"zlib: deflateInit2 failed"};
  const uint64_t total = stream.size();
  std::vector<char> buffer(kDeflateSampleBlockBytes);

  if (total <= budget_bytes) {
    uint64_t offset = 0;
    while (offset < total) {
      auto got = stream.ReadAt(offset, buffer.size(), buffer.data());
      if (!got.ok()) return got.error();
      if (got.value() == 0) break;
      offset += got.value();
      if (!deflater.Feed(buffer.data(), got.value(), false, measure.compressed_bytes)) {
        return Error{"zlib: deflate failed"};
      }
      measure.sampled_bytes += got.value();
    }
    if (!deflater.Feed(nullptr, 0, true, measure.compressed_bytes)) {
      return Error{"zlib: deflate failed"};
    }
    return measure;
  }

  const uint64_t samples = budget_bytes / kDeflateSampleBlockBytes;
  const uint64_t last_start = total - kDeflateSampleBlockBytes;
  for (uint64_t i = 0; i < samples; ++i) {
    const uint64_t start = samples == 1 ? 0 : last_start * i / (samples - 1);
    auto got = stream.ReadAt(start, buffer.size(), buffer.data());
    if (!got.ok()) return got.error();
    if (!deflater.Feed(buffer.data(), got.value(), true, measure.compressed_bytes)) {
      return Error{"zlib: deflate failed"};
    }
    measure.sampled_bytes += got.value();
  }
  return measure;
}

}  // namespace codedrift::cli
