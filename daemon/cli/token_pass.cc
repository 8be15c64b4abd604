#include "token_pass.h"

#include <algorithm>
#include <cstdint>
#include <map>
#include <memory>
#include <system_error>
#include <thread>
#include <unordered_map>
#include <vector>

#include "codedrift/entropy.h"

#include "block_counter.h"
#include "id_pipeline.h"

namespace codedrift::cli {
namespace {

// One half's symbolizer and counts. The first half counts each order's blocks once; the
// second counts them at every phase, because where its blocks start depends on how many
// symbols the first half had.
struct Half {
  std::unique_ptr<Symbolizer> symbolizer;
  DenseCounter singles;
  std::map<int, std::vector<BlockCounter>> blocks;  // order -> counters by phase (skip)
  Status status = Ok{};
  bool stop_on_overflow = false;  // second half: give up once its own table is full
  bool overflowed = false;
  SymbolId overflow_id = UINT32_MAX;  // the symbolizer's id of kOverflowToken

  Half(const TokenOptions& options, const std::set<int>& orders, bool second_half)
      : symbolizer(MakeTokenSymbolizer(options)), stop_on_overflow(second_half) {
    const bool all_phases = second_half;
    for (SymbolId id = 0; id < symbolizer->IdLimit(); ++id) {
      if (symbolizer->KeyOf(id) == kOverflowToken) overflow_id = id;
    }
    for (const int order : orders) {
      if (order < 2) continue;
      for (int phase = 0; phase < (all_phases ? order : 1); ++phase) {
        blocks[order].emplace_back(order, phase);
      }
    }
  }

  void Count(const std::vector<SymbolId>& ids) {
    singles.Add(ids);
    for (auto& [order, counters] : blocks) {
      for (BlockCounter& counter : counters) counter.Add(ids);
    }
  }

  // Symbolizes [begin, end); with `pipelined`, counting runs on a second thread meanwhile.
  void Run(const CaptureStream& stream, uint64_t begin, uint64_t end, bool pipelined,
           Progress* progress) {
    IdPipeline pipeline([this](const std::vector<SymbolId>& ids) { Count(ids); }, pipelined);
    std::vector<SymbolId> ids = pipeline.TakeBuffer();
    status = stream.ForEachLineBatch(
        [&](const std::vector<std::string_view>& lines, uint64_t) {
          uint64_t batch_bytes = 0;
          for (const std::string_view line : lines) {
            symbolizer->Append(line, ids);
            batch_bytes += line.size();
          }
          pipeline.Push(std::move(ids));
          ids = pipeline.TakeBuffer();
          if (progress != nullptr) progress->Advance(batch_bytes);
          if (!stop_on_overflow) return true;
          pipeline.Drain();
          const std::vector<uint64_t>& counts = singles.counts();
          overflowed = overflow_id < counts.size() && counts[overflow_id] != 0;
          return !overflowed;
        },
        begin, end);
    pipeline.Finish();
  }
};

OrderCounts FromCounter(const BlockCounter& counter) {
  const std::vector<uint64_t> values = counter.Values();
  return {counter.blocks(), values.size(), PluginEntropyBits(values)};
}

// Renumbers the second half's ids into the first half's id space the way one sequential
// symbolizer would have numbered them: tokens the first half knows keep its ids; new tokens
// get fresh ids in order of first appearance until max_distinct tokens exist; later ones are
// the overflow symbol (which the second half's own overflow also is: its table filled up
// with tokens that all came earlier in the stream).
struct Renumbering {
  std::vector<SymbolId> to_global;  // second-half id -> global id
  std::vector<SymbolKey> new_keys;  // keys of global ids from first.IdLimit() on
};

Renumbering Renumber(const Symbolizer& first, const Symbolizer& second, uint32_t max_distinct) {
  std::unordered_map<SymbolKey, SymbolId> known;
  uint64_t tokens = 0;
  for (SymbolId id = 0; id < first.IdLimit(); ++id) {
    SymbolKey key = first.KeyOf(id);
    if (key != kEndOfRecordToken && key != kOverflowToken) ++tokens;
    known.emplace(std::move(key), id);
  }
  const SymbolId overflow = known.at(SymbolKey(kOverflowToken));
  Renumbering out;
  out.to_global.resize(second.IdLimit());
  for (SymbolId id = 0; id < second.IdLimit(); ++id) {
    SymbolKey key = second.KeyOf(id);
    const auto found = known.find(key);
    if (found != known.end()) {
      out.to_global[id] = found->second;
    } else if (tokens + out.new_keys.size() < max_distinct) {
      out.to_global[id] = first.IdLimit() + static_cast<SymbolId>(out.new_keys.size());
      out.new_keys.push_back(std::move(key));
    } else {
      out.to_global[id] = overflow;
    }
  }
  return out;
}

// Order-1 counts by global id (first half `older`, second `newer`) into keyed counts.
template <class KeyOf>
void FillSingles(const std::vector<uint64_t>& older, const std::vector<uint64_t>& newer,
                 const KeyOf& key_of, StreamCounts& out) {
  out.all = SymbolCounts(Alphabet::Tokens());
  out.older = SymbolCounts(Alphabet::Tokens());
  out.newer = SymbolCounts(Alphabet::Tokens());
  std::vector<uint64_t> values;
  for (size_t id = 0; id < older.size(); ++id) {
    if (older[id] + newer[id] == 0) continue;
    const SymbolKey key = key_of(id);
    out.all.Add(key, older[id] + newer[id]);
    out.older.Add(key, older[id]);
    out.newer.Add(key, newer[id]);
    values.push_back(older[id] + newer[id]);
  }
  out.orders[1] = {out.all.total(), values.size(), PluginEntropyBits(values)};
}

// A DenseCounter's counts as exactly `size` entries (its array may be longer; the rest is 0).
std::vector<uint64_t> Resized(const std::vector<uint64_t>& counts, size_t size) {
  std::vector<uint64_t> out(size, 0);
  std::copy_n(counts.begin(), std::min(size, counts.size()), out.begin());
  return out;
}

// The second half's symbolizer ran out of room (it stopped there): its overflow may hide tokens
// the first half knows, so renumbering cannot be exact. The first half's symbolizer and
// counters carry on through the second half instead, exactly as one sequential pass would,
// with counting moved to a second thread so that the two stages at least overlap.
Result<StreamCounts> ContinueSequentially(const CaptureStream& stream, uint64_t split, Half& first,
                                          Progress* progress) {
  const std::vector<uint64_t> older_counts = first.singles.counts();
  first.Run(stream, split, stream.size(), true, progress);
  if (!first.status.ok()) return first.status.error();
  const Symbolizer& symbolizer = *first.symbolizer;
  const size_t ids = symbolizer.IdLimit();
  const std::vector<uint64_t> all = Resized(first.singles.counts(), ids);
  const std::vector<uint64_t> older = Resized(older_counts, ids);
  std::vector<uint64_t> newer(ids);
  for (size_t id = 0; id < ids; ++id) newer[id] = all[id] - older[id];
  StreamCounts out;
  out.bytes = stream.size();
  FillSingles(
      older, newer, [&](size_t id) { return symbolizer.KeyOf(static_cast<SymbolId>(id)); }, out);
  for (const auto& [order, counters] : first.blocks) out.orders[order] = FromCounter(counters[0]);
  return out;
}

}  // namespace

Result<StreamCounts> CountTokensInHalves(const CaptureStream& stream, const TokenOptions& options,
                                         const std::set<int>& orders, bool parallel,
                                         Progress* progress) {
  const uint64_t middle = stream.size() / 2;
  auto split = stream.LineEndAt(middle == 0 ? 0 : middle - 1);
  if (!split.ok()) return split.error();

  Half first(options, orders, false);
  Half second(options, orders, true);
  std::thread worker;
  if (parallel) {
    try {
      worker =
          std::thread([&] { second.Run(stream, split.value(), stream.size(), false, progress); });
    } catch (const std::system_error&) {
    }
  }
  first.Run(stream, 0, split.value(), false, progress);
  if (worker.joinable()) {
    worker.join();
  } else {
    second.Run(stream, split.value(), stream.size(), false, progress);
  }
  if (!first.status.ok()) return first.status.error();
  if (!second.status.ok()) return second.status.error();
  if (second.overflowed) return ContinueSequentially(stream, split.value(), first, progress);

  const Symbolizer& a = *first.symbolizer;
  const Renumbering renumbering = Renumber(a, *second.symbolizer, options.max_distinct);
  const std::vector<SymbolId>& to_global = renumbering.to_global;

  // Order 1: the first half is `older`, the renumbered second half `newer`.
  const size_t global_ids = a.IdLimit() + renumbering.new_keys.size();
  const std::vector<uint64_t> older = Resized(first.singles.counts(), global_ids);
  std::vector<uint64_t> newer(global_ids, 0);
  const std::vector<uint64_t>& second_counts = second.singles.counts();
  for (size_t id = 0; id < std::min(second_counts.size(), to_global.size()); ++id) {
    newer[to_global[id]] += second_counts[id];
  }
  StreamCounts out;
  out.bytes = stream.size();
  FillSingles(
      older, newer,
      [&](size_t id) {
        return id < a.IdLimit() ? a.KeyOf(static_cast<SymbolId>(id))
                                : renumbering.new_keys[id - a.IdLimit()];
      },
      out);

  // Blocks: the second half's counter whose phase continues the first half's blocks, its ids
  // renumbered, plus the one block that straddles the cut.
  const uint64_t first_symbols = first.singles.total();
  for (auto& [order, counters] : first.blocks) {
    BlockCounter& merged = counters.front();
    const auto phase = static_cast<size_t>((order - first_symbols % order) % order);
    const BlockCounter& continued = second.blocks.at(order)[phase];
    if (phase > 0 && continued.head().size() == phase) {
      SymbolId straddle[4] = {};
      size_t k = 0;
      for (const SymbolId id : merged.pending()) straddle[k++] = id;
      for (const SymbolId id : continued.head()) straddle[k++] = to_global[id];
      merged.AddBlock(straddle, 1);
    }
    continued.ForEach([&](std::span<const SymbolId> block, uint64_t count) {
      SymbolId global[4] = {};
      for (size_t k = 0; k < block.size(); ++k) global[k] = to_global[block[k]];
      merged.AddBlock(global, count);
    });
    out.orders[order] = FromCounter(merged);
  }
  return out;
}

}  // namespace codedrift::cli
