#include "token_pass.h"

#include <algorithm>
#include <atomic>
#include <condition_variable>
#include <cstdint>
#include <functional>
#include <map>
#include <memory>
#include <mutex>
#include <optional>
#include <system_error>
#include <thread>
#include <unordered_map>
#include <vector>

#include "codedrift/entropy.h"

#include "block_counter.h"

namespace codedrift::cli {
namespace {

// Token ids 0 and 1 are end of record and overflow; tokens from 2 on (symbolizer.h).
constexpr SymbolId kReservedTokenIds = 2;

// Below this a tail is not worth a second thread.
constexpr uint64_t kParallelTailMinBytes = uint64_t{1} << 20;

// A table holding max_distinct tokens never changes again: every later token either has its
// id already or is the overflow symbol, so a copy of the symbolizer numbers any later part of
// the stream exactly as the original would.
bool Full(const Symbolizer& symbolizer, uint32_t max_distinct) {
  return symbolizer.IdLimit() - kReservedTokenIds >= max_distinct;
}

std::unique_ptr<Symbolizer> CopyOf(const Symbolizer& symbolizer, const TokenOptions& options) {
  auto copy = MakeTokenSymbolizer(options);
  if (!copy->ImportState(symbolizer.ExportState()).ok()) return nullptr;
  return copy;
}

// Starts fn on a new thread, or runs it here when no thread can be started (the figures do
// not depend on it).
std::thread StartOrRun(const std::function<void()>& fn) {
  try {
    return std::thread(fn);
  } catch (const std::system_error&) {
    fn();
    return {};
  }
}

// One part's symbolizer and counts. The head (the part from the stream's start) counts each
// order's blocks once; a later part counts them at every phase, because where its blocks start
// depends on how many symbols came before it.
struct Half {
  std::unique_ptr<Symbolizer> symbolizer;
  DenseCounter singles;
  std::map<int, std::vector<BlockCounter>> blocks;  // order -> counters by phase (skip)
  Status status = Ok{};
  bool overflowed = false;            // a run with stop_on_overflow stopped for it
  SymbolId overflow_id = UINT32_MAX;  // the symbolizer's id of kOverflowToken

  Half(std::unique_ptr<Symbolizer> symbolizer_in, const std::set<int>& orders, bool later_part)
      : symbolizer(std::move(symbolizer_in)) {
    for (SymbolId id = 0; id < symbolizer->IdLimit(); ++id) {
      if (symbolizer->KeyOf(id) == kOverflowToken) overflow_id = id;
    }
    for (const int order : orders) {
      if (order < 2) continue;
      for (int phase = 0; phase < (later_part ? order : 1); ++phase) {
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

  bool CountedOverflow() const {
    const std::vector<uint64_t>& counts = singles.counts();
    return overflow_id < counts.size() && counts[overflow_id] != 0;
  }

  // Symbolizes and counts [begin, end), batch by batch. After each batch `after_batch` (when
  // set) gets the stream offset reached and may stop the run by returning false. With
  // `stop_on_overflow` the run stops after the batch in which the overflow symbol first shows.
  void Run(const CaptureStream& stream, uint64_t begin, uint64_t end, bool stop_on_overflow,
           Progress* progress, const std::function<bool(uint64_t)>& after_batch = nullptr) {
    std::vector<SymbolId> ids;
    status = stream.ForEachLineBatch(
        [&](const std::vector<std::string_view>& lines, uint64_t batch_end) {
          uint64_t batch_bytes = 0;
          ids.clear();
          for (const std::string_view line : lines) {
            symbolizer->Append(line, ids);
            batch_bytes += line.size();
          }
          Count(ids);
          if (progress != nullptr) progress->Advance(batch_bytes);
          if (stop_on_overflow && CountedOverflow()) {
            overflowed = true;
            return false;
          }
          return after_batch == nullptr || after_batch(batch_end);
        },
        begin, end);
  }
};

// Hands a copy of the head's symbolizer, once its table is full, to the thread of a later part
// whose own symbolizer overflowed (and so cannot be renumbered exactly). Thread-safe.
class Handoff {
 public:
  // The later part's thread: asks for a copy and waits for it, or for the head to end without
  // one (nullptr).
  std::unique_ptr<Symbolizer> Await() {
    std::unique_lock lock(mutex_);
    wanted_.store(true, std::memory_order_relaxed);
    changed_.wait(lock, [&] { return copy_ != nullptr || closed_; });
    return std::move(copy_);
  }
  bool wanted() const { return wanted_.load(std::memory_order_relaxed); }
  // The head's thread, at most once.
  void Post(std::unique_ptr<Symbolizer> copy) {
    std::lock_guard lock(mutex_);
    copy_ = std::move(copy);
    closed_ = true;
    changed_.notify_all();
  }
  void Close() {
    std::lock_guard lock(mutex_);
    closed_ = true;
    changed_.notify_all();
  }
  bool closed() {
    std::lock_guard lock(mutex_);
    return closed_;
  }

 private:
  std::atomic<bool> wanted_{false};
  std::mutex mutex_;
  std::condition_variable changed_;
  std::unique_ptr<Symbolizer> copy_;  // guarded by mutex_
  bool closed_ = false;               // guarded by mutex_
};

OrderCounts FromCounter(const BlockCounter& counter) {
  const std::vector<uint64_t> values = counter.Values();
  return {counter.blocks(), values.size(), PluginEntropyBits(values)};
}

// Renumbers a later part's ids into the head's id space the way one sequential symbolizer
// would have numbered them: tokens the head knows keep its ids; new tokens get fresh ids in
// order of first appearance until max_distinct tokens exist; later ones are the overflow
// symbol. Exact when the later part's own symbolizer never overflowed, or when it is a copy of
// the head's full one (then every id maps to itself).
struct Renumbering {
  std::vector<SymbolId> to_global;  // later-part id -> global id
  std::vector<SymbolKey> new_keys;  // keys of global ids from head.IdLimit() on
};

Renumbering Renumber(const Symbolizer& head, const Symbolizer& later, uint32_t max_distinct) {
  std::unordered_map<SymbolKey, SymbolId> known;
  uint64_t tokens = 0;
  for (SymbolId id = 0; id < head.IdLimit(); ++id) {
    SymbolKey key = head.KeyOf(id);
    if (key != kEndOfRecordToken && key != kOverflowToken) ++tokens;
    known.emplace(std::move(key), id);
  }
  const SymbolId overflow = known.at(SymbolKey(kOverflowToken));
  Renumbering out;
  out.to_global.resize(later.IdLimit());
  for (SymbolId id = 0; id < later.IdLimit(); ++id) {
    SymbolKey key = later.KeyOf(id);
    const auto found = known.find(key);
    if (found != known.end()) {
      out.to_global[id] = found->second;
    } else if (tokens + out.new_keys.size() < max_distinct) {
      out.to_global[id] = head.IdLimit() + static_cast<SymbolId>(out.new_keys.size());
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

// Joins the head (from the stream's start) and the later part that follows it: order-1 counts
// with the later part's ids renumbered (`older` is the head's count at the halves' split, by
// head id), and blocks from the later part's counter whose phase continues the head's blocks,
// plus the one block that straddles the cut.
StreamCounts Join(const CaptureStream& stream, Half& head, const Half& later,
                  const std::vector<uint64_t>& older_counts, uint32_t max_distinct) {
  const Symbolizer& a = *head.symbolizer;
  const Renumbering renumbering = Renumber(a, *later.symbolizer, max_distinct);
  const std::vector<SymbolId>& to_global = renumbering.to_global;

  const size_t global_ids = a.IdLimit() + renumbering.new_keys.size();
  std::vector<uint64_t> all = Resized(head.singles.counts(), global_ids);
  const std::vector<uint64_t>& later_counts = later.singles.counts();
  for (size_t id = 0; id < std::min(later_counts.size(), to_global.size()); ++id) {
    all[to_global[id]] += later_counts[id];
  }
  const std::vector<uint64_t> older = Resized(older_counts, global_ids);
  std::vector<uint64_t> newer(global_ids);
  for (size_t id = 0; id < global_ids; ++id) newer[id] = all[id] - older[id];
  StreamCounts out;
  out.bytes = stream.size();
  FillSingles(
      older, newer,
      [&](size_t id) {
        return id < a.IdLimit() ? a.KeyOf(static_cast<SymbolId>(id))
                                : renumbering.new_keys[id - a.IdLimit()];
      },
      out);

  const uint64_t head_symbols = head.singles.total();
  for (auto& [order, counters] : head.blocks) {
    BlockCounter& merged = counters.front();
    const auto phase = static_cast<size_t>((order - head_symbols % order) % order);
    const BlockCounter& continued = later.blocks.at(order)[phase];
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

// The second half overflowed on its own and the head's table did not fill within the first
// half. The head's symbolizer carries on through the second half until its table is full (it
// must: the second half alone holds more than max_distinct tokens); from there on a copy of
// it takes the last part on a second thread while the head does the middle.
Result<StreamCounts> ContinueUntilFull(const CaptureStream& stream, uint64_t split, Half& head,
                                       const TokenOptions& options, const std::set<int>& orders,
                                       Progress* progress) {
  const std::vector<uint64_t> older_counts = head.singles.counts();
  uint64_t reached = split;
  head.Run(stream, split, stream.size(), false, progress, [&](uint64_t batch_end) {
    reached = batch_end;
    return !Full(*head.symbolizer, options.max_distinct);
  });
  if (!head.status.ok()) return head.status.error();

  uint64_t cut = stream.size();
  std::unique_ptr<Symbolizer> copy;
  if (stream.size() - reached >= kParallelTailMinBytes) {
    auto middle = stream.LineEndAt(reached + (stream.size() - reached) / 2);
    if (!middle.ok()) return middle.error();
    copy = CopyOf(*head.symbolizer, options);
    if (copy != nullptr) cut = middle.value();
  }
  Half tail(copy != nullptr ? std::move(copy) : MakeTokenSymbolizer(options), orders, true);
  std::thread worker;
  if (cut < stream.size()) {
    worker = StartOrRun([&] { tail.Run(stream, cut, stream.size(), false, progress); });
  }
  head.Run(stream, reached, cut, false, progress);
  if (worker.joinable()) worker.join();
  if (!head.status.ok()) return head.status.error();
  if (!tail.status.ok()) return tail.status.error();
  return Join(stream, head, tail, older_counts, options.max_distinct);
}

}  // namespace

Result<StreamCounts> CountTokensInHalves(const CaptureStream& stream, const TokenOptions& options,
                                         const std::set<int>& orders, bool parallel,
                                         Progress* progress) {
  const uint64_t middle = stream.size() / 2;
  auto split = stream.LineEndAt(middle == 0 ? 0 : middle - 1);
  if (!split.ok()) return split.error();
  const uint64_t end = stream.size();

  Half first(MakeTokenSymbolizer(options), orders, false);
  Half second(MakeTokenSymbolizer(options), orders, true);
  std::optional<Half> frozen;  // the second half again, through a copy of the full head
  Handoff handoff;
  const auto second_half = [&] {
    second.Run(stream, split.value(), end, true, progress);
    if (!second.overflowed || !second.status.ok()) return;
    // Its overflow may hide tokens the head knows: wait for the head's table to fill (usually
    // early, when the capture has unbounded tokens) and redo the half with a copy of it.
    std::unique_ptr<Symbolizer> copy = handoff.Await();
    if (copy == nullptr) return;
    frozen.emplace(std::move(copy), orders, true);
    frozen->Run(stream, split.value(), end, false, progress);
  };
  std::thread worker;
  if (parallel) {
    try {
      worker = std::thread(second_half);
    } catch (const std::system_error&) {
      // Runs after the first half below (never before it: it may wait for the head).
    }
  }
  first.Run(stream, 0, split.value(), false, progress, [&](uint64_t) {
    if (handoff.wanted() && !handoff.closed() && Full(*first.symbolizer, options.max_distinct)) {
      handoff.Post(CopyOf(*first.symbolizer, options));
    }
    return true;
  });
  handoff.Close();
  if (worker.joinable()) {
    worker.join();
  } else {
    second_half();
  }
  if (!first.status.ok()) return first.status.error();
  if (!second.status.ok()) return second.status.error();
  if (frozen && !frozen->status.ok()) return frozen->status.error();

  const std::vector<uint64_t> older_counts = first.singles.counts();
  if (!second.overflowed) return Join(stream, first, second, older_counts, options.max_distinct);
  if (frozen) return Join(stream, first, *frozen, older_counts, options.max_distinct);
  return ContinueUntilFull(stream, split.value(), first, options, orders, progress);
}

}  // namespace codedrift::cli
