#include "deflate_measure.h"

#include <algorithm>
#include <system_error>
#include <thread>
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

Result<DeflateMeasure> MeasureDeflate(const CaptureStream& stream, uint64_t budget_bytes,
                                      int threads) {
  DeflateMeasure measure;
  const uint64_t total = stream.size();
  if (total <= budget_bytes) {
    Deflater deflater;
    if (!deflater.ok()) return Error{"zlib: deflateInit2 failed"};
    std::vector<char> buffer(kDeflateSampleBlockBytes);
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

  // Each sample is its own raw stream, so the samples split across threads (every thread
  // takes every `parts`-th one) and the compressed sizes add up to the same total.
  const uint64_t samples = budget_bytes / kDeflateSampleBlockBytes;
  const uint64_t last_start = total - kDeflateSampleBlockBytes;
  const auto parts =
      static_cast<size_t>(std::clamp<uint64_t>(threads, 1, std::max<uint64_t>(samples, 1)));
  std::vector<DeflateMeasure> partial(parts);
  std::vector<Status> statuses(parts, Ok{});
  const auto compress_samples = [&](size_t part) {
    Deflater own;
    std::vector<char> block(kDeflateSampleBlockBytes);
    if (!own.ok()) {
      statuses[part] = Error{"zlib: deflateInit2 failed"};
      return;
    }
    for (uint64_t i = part; i < samples; i += parts) {
      const uint64_t start = samples == 1 ? 0 : last_start * i / (samples - 1);
      auto got = stream.ReadAt(start, block.size(), block.data());
      if (!got.ok()) {
        statuses[part] = got.error();
        return;
      }
      if (!own.Feed(block.data(), got.value(), true, partial[part].compressed_bytes)) {
        statuses[part] = Error{"zlib: deflate failed"};
        return;
      }
      partial[part].sampled_bytes += got.value();
    }
  };
  std::vector<std::jthread> workers;
  for (size_t part = 1; part < parts; ++part) {
    try {
      workers.emplace_back(compress_samples, part);
    } catch (const std::system_error&) {
      compress_samples(part);  // no thread available: the answer must not depend on it
    }
  }
  compress_samples(0);
  workers.clear();  // joins
  for (size_t part = 0; part < parts; ++part) {
    if (!statuses[part].ok()) return statuses[part].error();
    measure.sampled_bytes += partial[part].sampled_bytes;
    measure.compressed_bytes += partial[part].compressed_bytes;
  }
  return measure;
}

}  // namespace codedrift::cli
