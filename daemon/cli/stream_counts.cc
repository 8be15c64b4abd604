#include "stream_counts.h"

#include <memory>
#include <string_view>
#include <vector>

#include "codedrift/entropy.h"

#include "block_counter.h"
#include "byte_pairs.h"
#include "id_pipeline.h"
#include "token_pass.h"

namespace codedrift::cli {
namespace {

// Below this a second thread costs more than it saves.
constexpr uint64_t kParallelTokensMinBytes = uint64_t{1} << 20;

std::vector<uint64_t> Nonzero(const std::vector<uint64_t>& counts) {
  std::vector<uint64_t> values;
  for (const uint64_t count : counts) {
    if (count != 0) values.push_back(count);
  }
  return values;
}

OrderCounts FromValues(uint64_t blocks, const std::vector<uint64_t>& values) {
  return {blocks, values.size(), PluginEntropyBits(values)};
}

SymbolCounts ByteCounts(const std::vector<uint64_t>& histogram) {
  uint64_t dense[256];
  for (size_t b = 0; b < 256; ++b) dense[b] = histogram[b];
  return BytesFromHistogram(dense);
}

// Orders 3 and 4 of single bytes: a second sequential pass with one n-byte block symbolizer
// per order (block boundaries from the stream's start, carried across reads and files).
Status CountHigherByteOrders(const CaptureStream& stream, const std::set<int>& orders,
                             StreamCounts& out, Progress* progress) {
  std::vector<std::pair<int, std::unique_ptr<Symbolizer>>> symbolizers;
  std::vector<DenseCounter> counters;
  for (const int order : orders) {
    if (order < 3) continue;
    symbolizers.emplace_back(order, MakeBytesSymbolizer(order));
    counters.emplace_back();
  }
  if (symbolizers.empty()) return Ok{};
  if (progress != nullptr) progress->Restart("orders 3+", stream.size());
  std::vector<SymbolId> ids;
  Status status = stream.ForEachChunk([&](std::string_view chunk) {
    for (size_t i = 0; i < symbolizers.size(); ++i) {
      ids.clear();
      symbolizers[i].second->Append(chunk, ids);
      counters[i].Add(ids);
    }
    if (progress != nullptr) progress->Advance(chunk.size());
    return true;
  });
  if (!status.ok()) return status;
  for (size_t i = 0; i < symbolizers.size(); ++i) {
    out.orders[symbolizers[i].first] = FromValues(counters[i].total(), counters[i].Values());
  }
  return Ok{};
}

Result<StreamCounts> CountSingleBytes(const CaptureStream& stream, const std::set<int>& orders,
                                      bool parallel, Progress* progress) {
  auto pairs = CountBytePairs(stream, parallel, progress);
  if (!pairs.ok()) return pairs.error();
  const BytePairCounts& counted = pairs.value();

  StreamCounts out;
  out.bytes = counted.bytes;
  out.all = ByteCounts(counted.singles);
  out.older = ByteCounts(counted.older_singles);
  std::vector<uint64_t> newer(256);
  for (size_t b = 0; b < 256; ++b) newer[b] = counted.singles[b] - counted.older_singles[b];
  out.newer = ByteCounts(newer);
  out.orders[1] = FromValues(counted.bytes, Nonzero(counted.singles));
  if (orders.contains(2)) out.orders[2] = FromValues(counted.bytes / 2, Nonzero(counted.pairs));
  Status higher = CountHigherByteOrders(stream, orders, out, progress);
  if (!higher.ok()) return higher.error();
  return out;
}

// Tokens, and byte blocks of 2..4: one sequential pass through the symbolizer, counting its
// ids densely (order 1) and in n-id blocks (orders 2..4).
// With `pipelined`, the counting runs on a second thread while the caller symbolizes.
class SymbolizedPass {
 public:
  SymbolizedPass(std::unique_ptr<Symbolizer> symbolizer, const std::set<int>& orders,
                 uint64_t middle, bool pipelined)
      : symbolizer_(std::move(symbolizer)),
        middle_(middle),
        blocks_(MakeBlockCounters(orders)),
        pipeline_([this](const std::vector<SymbolId>& ids) { Count(ids); }, pipelined) {
    ids_ = pipeline_.TakeBuffer();
  }

  Symbolizer& symbolizer() { return *symbolizer_; }

  // Symbolizes one record that ends at stream offset `end`; splits the halves after it when
  // it reaches the middle.
  void AddRecord(std::string_view record, uint64_t end) {
    symbolizer_->Append(record, ids_);
    if (!split_ && end >= middle_) {
      Flush();
      pipeline_.Drain();
      older_ = all_.counts();
      split_ = true;
    }
  }

  // Hands the ids symbolized so far to the counting stage.
  void Flush() {
    if (ids_.empty()) return;
    pipeline_.Push(std::move(ids_));
    ids_ = pipeline_.TakeBuffer();
  }

  void Finish(StreamCounts& out) {
    Flush();
    pipeline_.Finish();
    const Alphabet& alphabet = symbolizer_->alphabet();
    out.all = SymbolCounts(alphabet);
    out.older = SymbolCounts(alphabet);
    out.newer = SymbolCounts(alphabet);
    const std::vector<uint64_t>& counts = all_.counts();
    for (size_t id = 0; id < counts.size(); ++id) {
      if (counts[id] == 0) continue;
      const SymbolKey key = symbolizer_->KeyOf(static_cast<SymbolId>(id));
      const uint64_t older = id < older_.size() ? older_[id] : 0;
      out.all.Add(key, counts[id]);
      out.older.Add(key, older);
      out.newer.Add(key, counts[id] - older);
    }
    out.orders[1] = FromValues(all_.total(), all_.Values());
    for (const BlockCounter& counter : blocks_) {
      out.orders[counter.order()] = FromValues(counter.blocks(), counter.Values());
    }
  }

 private:
  static std::vector<BlockCounter> MakeBlockCounters(const std::set<int>& orders) {
    std::vector<BlockCounter> counters;
    for (const int order : orders) {
      if (order >= 2) counters.emplace_back(order);
    }
    return counters;
  }

  // Runs on the counting stage.
  void Count(const std::vector<SymbolId>& ids) {
    all_.Add(ids);
    for (BlockCounter& counter : blocks_) counter.Add(ids);
  }

  std::unique_ptr<Symbolizer> symbolizer_;
  uint64_t middle_;
  bool split_ = false;
  std::vector<SymbolId> ids_;
  DenseCounter all_;             // written by the counting stage; read after Drain/Finish
  std::vector<uint64_t> older_;  // order-1 counts at the split
  std::vector<BlockCounter> blocks_;
  IdPipeline pipeline_;  // last: stops before the counters it writes go away
};

Result<StreamCounts> CountSymbolized(const CaptureStream& stream, const SymbolSource& source,
                                     const std::set<int>& orders, bool pipelined,
                                     Progress* progress) {
  const bool tokens = source.alphabet.kind == AlphabetKind::kTokens;
  std::unique_ptr<Symbolizer> symbolizer =
      tokens ? MakeTokenSymbolizer(source.tokens)
             : MakeBytesSymbolizer(source.alphabet.block, source.bytes);
  if (symbolizer == nullptr) {
    return Error{"unsupported symbols: " + source.alphabet.ToString()};
  }
  SymbolizedPass pass(std::move(symbolizer), orders, stream.size() / 2, pipelined);
  Status status = Ok{};
  if (tokens) {
    status = stream.ForEachLineBatch(
        [&](const std::vector<std::string_view>& lines, uint64_t stream_end) {
          uint64_t batch_bytes = 0;
          for (const std::string_view line : lines) batch_bytes += line.size();
          uint64_t end = stream_end - batch_bytes;
          for (const std::string_view line : lines) {
            end += line.size();
            pass.AddRecord(line, end);
          }
          pass.Flush();
          if (progress != nullptr) progress->Advance(batch_bytes);
          return true;
        });
  } else {
    // Byte blocks ignore record boundaries, so a chunk is cut only where the halves split.
    uint64_t offset = 0;
    status = stream.ForEachChunk([&](std::string_view chunk) {
      const uint64_t middle = stream.size() / 2;
      if (offset < middle && offset + chunk.size() > middle) {
        const size_t head = static_cast<size_t>(middle - offset);
        pass.AddRecord(chunk.substr(0, head), middle);
        pass.AddRecord(chunk.substr(head), offset + chunk.size());
      } else {
        pass.AddRecord(chunk, offset + chunk.size());
      }
      pass.Flush();
      offset += chunk.size();
      if (progress != nullptr) progress->Advance(chunk.size());
      return true;
    });
  }
  if (!status.ok()) return status.error();
  StreamCounts out;
  out.bytes = stream.size();
  pass.Finish(out);
  return out;
}

}  // namespace

Result<StreamCounts> CountStream(const CaptureStream& stream, const SymbolSource& source,
                                 const std::set<int>& orders, int threads, Progress* progress) {
  const bool parallel = threads > 1;
  if (source.alphabet.kind == AlphabetKind::kBytes && source.alphabet.block == 1) {
    return CountSingleBytes(stream, orders, parallel, progress);
  }
  if (source.alphabet.kind == AlphabetKind::kTokens && parallel &&
      stream.size() >= kParallelTokensMinBytes) {
    return CountTokensInHalves(stream, source.tokens, orders, true, progress);
  }
  return CountSymbolized(stream, source, orders, parallel, progress);
}

}  // namespace codedrift::cli
