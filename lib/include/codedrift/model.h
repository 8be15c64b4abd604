// Model: one symbolizer feeding one window, plus what the evaluator needs to read it.
// Ingest runs on socket threads; Sample runs on the evaluation thread.
#pragma once

#include <cstdint>
#include <memory>
#include <mutex>
#include <shared_mutex>
#include <span>
#include <string>
#include <string_view>
#include <vector>

#include "codedrift/alphabet.h"
#include "codedrift/brief_lock_mutex.h"
#include "codedrift/byte_selection.h"
#include "codedrift/clock.h"
#include "codedrift/symbolizer.h"
#include "codedrift/window.h"

namespace codedrift {

struct SymbolizerSpec {
  AlphabetKind kind = AlphabetKind::kBytes;
  int block = 1;        // bytes
  TokenOptions tokens;  // tokens
  FieldOptions field;   // field
  BytesOptions bytes;   // bytes: max_distinct of blocks of 3..4

  Alphabet alphabet() const;
  bool operator==(const SymbolizerSpec& other) const;
};

std::unique_ptr<Symbolizer> MakeSymbolizer(const SymbolizerSpec& spec);

// What the evaluator reads of a model at one instant; owns copies, needs no lock.
struct ModelSample {
  Alphabet alphabet;
  std::unique_ptr<Window> window;
  std::vector<SymbolKey> keys;       // id -> key, for every id handed out so far
  std::vector<uint64_t> cumulative;  // symbols ever seen, by id
  uint64_t symbols_total = 0;
  uint64_t records_total = 0;
  uint64_t skipped_records = 0;  // records the symbolizer could not use (field too short)
  std::chrono::nanoseconds taken_at{0};
};

// Everything a model carries, for checkpoints. Ids are the symbolizer's: restoring the
// symbolizer first makes them mean the same keys again.
struct ModelState {
  SymbolizerState symbolizer;
  WindowState window;
  std::vector<uint64_t> cumulative;  // symbols ever seen, by id
  uint64_t symbols_total = 0;
  uint64_t records_total = 0;
};

class TokenSymbolizer;
class LineMemoPool;
using CountedBytes = std::shared_ptr<const ByteSelection>;

// Thread-safe: Ingest may be called from any thread; Sample from another.
class Model {
 public:
  Model(SymbolizerSpec symbolizer, WindowSpec window, const Clock& clock);
  ~Model();

  // Hot path: symbolize, count, push into the window. One lock per record. Single bytes
  // (long records) and tokens are counted or symbolized before the lock is taken, so several
  // threads ingesting into one model overlap in that work.
  void Ingest(std::string_view record);
  // Hot path for `lines` framing: `records` whole records lying back to back in `run`, each
  // ending in '\n' (one received buffer's worth). Same effect as Ingest on each in turn, with
  // one lock, and for single bytes one count and one window push for them all.
  void IngestRun(std::string_view run, uint64_t records);
  // Copies the window and counters (brief lock; the counting happens later, unlocked).
  ModelSample Sample();

  // Single-byte models: the bytes whose lifetime counts (ModelSample::cumulative) are kept;
  // the others stop growing. The evaluation needs lifetime counts only for bytes the
  // deployed table has no code for, and skipping the rest keeps per-byte counting off the hot
  // path. Every byte until this is called; other models count every id regardless.
  void CountOnlyBytes(const ByteSelection& bytes);

  const SymbolizerSpec& symbolizer_spec() const { return symbolizer_spec_; }
  const WindowSpec& window_spec() const { return window_spec_; }
  uint64_t window_memory_bytes();

  // Checkpoints: a copy of the state (brief lock, like Sample), and taking a saved state over
  // (before the first Ingest). Import checks the state fits this model's spec and leaves the
  // model as it was when it does not.
  ModelState ExportState();
  Status ImportState(const ModelState& state);

 private:
  const SymbolizerSpec symbolizer_spec_;
  const WindowSpec window_spec_;
  const Clock& clock_;
  const bool raw_bytes_;  // bytes with block 1: ids are the bytes themselves
  const bool tokens_;     // tokens: symbolized outside mutex_ (SymbolizeTokens)

  // Tokens outside mutex_: known tokens are looked up under a shared lock of
  // symbolizer_mutex_, new ones stored under its exclusive lock; ids then go to the window
  // under mutex_ (any order of two concurrent runs is a valid order of arrival).
  SymbolId SymbolizeTokens(std::span<const std::string_view> records, std::vector<SymbolId>& ids);
  // The same for a run of lines, scanned whole (TokenSymbolizer::AppendKnownLines).
  SymbolId SymbolizeTokenLines(std::string_view run, std::vector<SymbolId>& ids);
  // Under mutex_: counts and pushes ids (all below `limit`) of `records` records.
  void AddIds(const std::vector<SymbolId>& ids, SymbolId limit, uint64_t records);

  BriefLockMutex mutex_;  // guards everything below; taken before symbolizer_mutex_ when both are
  // Guards the symbolizer's state for tokens models (shared: reads, exclusive: new tokens),
  // and the symbolizer_ pointer together with mutex_.
  std::shared_mutex symbolizer_mutex_;
  std::unique_ptr<Symbolizer> symbolizer_;
  TokenSymbolizer* token_symbolizer_ = nullptr;  // symbolizer_, for tokens models
  std::unique_ptr<LineMemoPool> line_memos_;     // tokens models: for runs of lines
  std::unique_ptr<Window> window_;
  std::vector<SymbolId> scratch_ids_;
  // Sample's cache of id -> key: Sample and ImportState take keys_mutex_ before mutex_, and
  // ingest never takes it.
  std::mutex keys_mutex_;
  std::vector<SymbolKey> keys_;
  std::vector<uint64_t> cumulative_;  // by id (not raw bytes)
  uint64_t byte_counts_[256] = {};    // raw bytes: those in counted_bytes_
  // Changed under mutex_ and counted_bytes_mutex_ both (only at reloads), so ingest reads it
  // under mutex_ or, before taking mutex_, under the small lock held only to copy the pointer.
  CountedBytes counted_bytes() const;
  mutable BriefLockMutex counted_bytes_mutex_;
  CountedBytes counted_bytes_ = std::make_shared<const ByteSelection>();
  uint64_t symbols_total_ = 0;
  uint64_t records_total_ = 0;
};

}  // namespace codedrift
