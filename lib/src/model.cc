#include "codedrift/model.h"

#include <algorithm>

#include "line_memo_pool.h"
#include "token_symbolizer.h"

namespace codedrift {

Alphabet SymbolizerSpec::alphabet() const {
  switch (kind) {
    case AlphabetKind::kBytes:
      return Alphabet::Bytes(block);
    case AlphabetKind::kTokens:
      return Alphabet::Tokens();
    case AlphabetKind::kField:
      return Alphabet::Field(field.width_bits);
  }
  return Alphabet::Bytes();
}

bool SymbolizerSpec::operator==(const SymbolizerSpec& other) const {
  if (kind != other.kind) return false;
  switch (kind) {
    case AlphabetKind::kBytes:
      return block == other.block && bytes.max_distinct == other.bytes.max_distinct;
    case AlphabetKind::kTokens:
      return tokens.delimiters == other.tokens.delimiters &&
             tokens.mask_digits == other.tokens.mask_digits &&
             tokens.max_distinct == other.tokens.max_distinct;
    case AlphabetKind::kField:
      return field.offset_bits == other.field.offset_bits &&
             field.width_bits == other.field.width_bits && field.order == other.field.order &&
             field.transform == other.field.transform &&
             field.max_distinct == other.field.max_distinct;
  }
  return false;
}

std::unique_ptr<Symbolizer> MakeSymbolizer(const SymbolizerSpec& spec) {
  switch (spec.kind) {
    case AlphabetKind::kBytes:
      return MakeBytesSymbolizer(spec.block, spec.bytes);
    case AlphabetKind::kTokens:
      return MakeTokenSymbolizer(spec.tokens);
    case AlphabetKind::kField:
      return MakeFieldSymbolizer(spec.field);
  }
  return MakeBytesSymbolizer(1);
}

namespace {

std::unique_ptr<Window> MakeWindow(const WindowSpec& spec, bool raw_bytes, const Clock& clock) {
  if (spec.by_time()) return MakeTimeWindow(spec.span, spec.buckets, clock);
  return raw_bytes ? MakeByteCountWindow(spec.symbols) : MakeIdCountWindow(spec.symbols);
}

// Bytes from which counting into a histogram of its own, outside the lock, and adding its 256
// counts under it, beats counting straight into the model's histogram under the lock.
constexpr size_t kCountOutsideLockBytes = 2048;

}  // namespace

Model::Model(SymbolizerSpec symbolizer, WindowSpec window, const Clock& clock)
    : symbolizer_spec_(std::move(symbolizer)),
      window_spec_(window),
      clock_(clock),
      raw_bytes_(symbolizer_spec_.kind == AlphabetKind::kBytes && symbolizer_spec_.block == 1),
      tokens_(symbolizer_spec_.kind == AlphabetKind::kTokens),
      symbolizer_(MakeSymbolizer(symbolizer_spec_)),
      token_symbolizer_(tokens_ ? dynamic_cast<TokenSymbolizer*>(symbolizer_.get()) : nullptr),
      line_memos_(tokens_ ? std::make_unique<LineMemoPool>() : nullptr),
      window_(MakeWindow(window_spec_, raw_bytes_, clock)) {}

Model::~Model() = default;

SymbolId Model::SymbolizeTokens(std::span<const std::string_view> records,
                                std::vector<SymbolId>& ids) {
  size_t done = 0;
  {
    std::shared_lock lock(symbolizer_mutex_);
    while (done < records.size() && token_symbolizer_->AppendKnown(records[done], ids)) ++done;
    if (done == records.size()) return token_symbolizer_->IdLimit();
  }
  // A record with a token to store: it and the rest of the run take the exclusive lock (new
  // tokens come in bursts, mostly while a model warms up).
  std::unique_lock lock(symbolizer_mutex_);
  for (; done < records.size(); ++done) token_symbolizer_->Append(records[done], ids);
  return token_symbolizer_->IdLimit();
}

SymbolId Model::SymbolizeTokenLines(std::string_view run, std::vector<SymbolId>& ids) {
  size_t done = 0;
  {
    std::shared_lock lock(symbolizer_mutex_);
    const LineMemoPool::Lease memo = line_memos_->Take();
    done = token_symbolizer_->AppendKnownLines(run, ids, memo.memo());
    if (done == run.size()) return token_symbolizer_->IdLimit();
  }
  std::unique_lock lock(symbolizer_mutex_);
  token_symbolizer_->AppendLines(run.substr(done), ids);
  return token_symbolizer_->IdLimit();
}

void Model::AddIds(const std::vector<SymbolId>& ids, SymbolId limit, uint64_t records) {
  records_total_ += records;
  if (cumulative_.size() < limit) cumulative_.resize(limit, 0);
  for (SymbolId id : ids) ++cumulative_[id];
  window_->PushIds(ids);
  symbols_total_ += ids.size();
}

void Model::Ingest(std::string_view record) {
  if (tokens_) {
    thread_local std::vector<SymbolId> ids;
    ids.clear();
    const SymbolId limit = SymbolizeTokens({&record, 1}, ids);
    std::lock_guard lock(mutex_);
    AddIds(ids, limit, 1);
    return;
  }
  IngestRun(record, 1);
}

void Model::IngestRun(std::string_view run, uint64_t records) {
  if (raw_bytes_) {
    // Long runs are counted before mutex_ is taken, with the selection read under its own
    // lock; short ones (most single records) under mutex_, which guards the selection too.
    uint64_t counts[256] = {};
    const bool long_run = run.size() >= kCountOutsideLockBytes;
    bool counted_outside = false;
    if (long_run) {
      const CountedBytes counted = counted_bytes();
      counted_outside = !counted->none();
      if (counted_outside) counted->Count(run, counts);
    }
    std::lock_guard lock(mutex_);
    records_total_ += records;
    if (counted_outside) {
      for (size_t b = 0; b < 256; ++b) byte_counts_[b] += counts[b];
    } else if (!long_run) {
      counted_bytes_->Count(run, byte_counts_);
    }
    window_->PushBytes({reinterpret_cast<const uint8_t*>(run.data()), run.size()});
    symbols_total_ += run.size();
    return;
  }
  if (tokens_) {
    thread_local std::vector<SymbolId> ids;
    ids.clear();
    const SymbolId limit = SymbolizeTokenLines(run, ids);
    std::lock_guard lock(mutex_);
    AddIds(ids, limit, records);
    return;
  }
  // Other symbolizers carry state from record to record (blocks, field deltas): in order,
  // under the lock.
  std::lock_guard lock(mutex_);
  scratch_ids_.clear();
  if (records == 1) {
    symbolizer_->Append(run, scratch_ids_);  // one record, whatever it holds (Ingest)
  } else {
    while (!run.empty()) {
      const size_t end = run.find('\n');
      const size_t length = end == std::string_view::npos ? run.size() : end + 1;
      symbolizer_->Append(run.substr(0, length), scratch_ids_);
      run.remove_prefix(length);
    }
  }
  AddIds(scratch_ids_, symbolizer_->IdLimit(), records);
}

void Model::CountOnlyBytes(const ByteSelection& bytes) {
  auto counted = std::make_shared<const ByteSelection>(bytes);
  std::lock_guard lock(mutex_);
  std::lock_guard selection_lock(counted_bytes_mutex_);
  counted_bytes_.swap(counted);  // the old one is freed after the locks, by the last holder
}

CountedBytes Model::counted_bytes() const {
  std::lock_guard lock(counted_bytes_mutex_);
  return counted_bytes_;
}

ModelSample Model::Sample() {
  ModelSample sample;
  sample.alphabet = symbolizer_spec_.alphabet();
  // Ingest into this model waits while mutex_ is held, so only copying into storage allocated,
  // and with its pages touched, beforehand runs under it: a fresh 4 MiB window copy or a
  // 512 KiB count vector would page-fault there for milliseconds. The counts are sized by the
  // last sample's id count (ids only grow). Keys are looked up and copied after it.
  std::unique_ptr<Window> copy = MakeWindow(window_spec_, raw_bytes_, clock_);
  std::lock_guard keys_lock(keys_mutex_);
  sample.cumulative.assign(raw_bytes_ ? 256 : keys_.size(), 0);
  SymbolId limit = 0;
  {
    std::lock_guard lock(mutex_);
    std::shared_lock symbolizer_lock(symbolizer_mutex_);
    limit = raw_bytes_ ? 256 : symbolizer_->IdLimit();
    if (!window_->CopyInto(*copy)) copy = window_->Clone();
    sample.cumulative.resize(limit, 0);  // allocates only when ids grew since the last sample
    if (raw_bytes_) {
      std::copy(std::begin(byte_counts_), std::end(byte_counts_), sample.cumulative.begin());
    } else {
      const size_t n = std::min<size_t>(cumulative_.size(), limit);
      std::copy_n(cumulative_.begin(), n, sample.cumulative.begin());
      std::fill(sample.cumulative.begin() + static_cast<std::ptrdiff_t>(n), sample.cumulative.end(),
                0);
    }
    sample.symbols_total = symbols_total_;
    sample.records_total = records_total_;
    sample.skipped_records = symbolizer_->skipped_records();
    sample.taken_at = clock_.Now();
  }
  sample.window = std::move(copy);
  {
    // Keys are append-only, so only ids new since the last sample are looked up.
    std::shared_lock symbolizer_lock(symbolizer_mutex_);
    for (SymbolId id = static_cast<SymbolId>(keys_.size()); id < limit; ++id) {
      keys_.push_back(symbolizer_->KeyOf(id));
    }
  }
  sample.keys.assign(keys_.begin(), keys_.begin() + static_cast<std::ptrdiff_t>(limit));
  return sample;
}

uint64_t Model::window_memory_bytes() {
  std::lock_guard lock(mutex_);
  return window_->memory_bytes();
}

ModelState Model::ExportState() {
  ModelState state;
  std::lock_guard lock(mutex_);
  std::shared_lock symbolizer_lock(symbolizer_mutex_);
  state.symbolizer = symbolizer_->ExportState();
  state.window = window_->ExportState();
  if (raw_bytes_) {
    state.cumulative.assign(std::begin(byte_counts_), std::end(byte_counts_));
  } else {
    state.cumulative = cumulative_;
  }
  state.symbols_total = symbols_total_;
  state.records_total = records_total_;
  return state;
}

Status Model::ImportState(const ModelState& state) {
  // Built aside and swapped in, so a refused state changes nothing.
  auto symbolizer = MakeSymbolizer(symbolizer_spec_);
  if (!symbolizer) return Error{"the model's symbolizer options are invalid"};
  if (auto imported = symbolizer->ImportState(state.symbolizer); !imported.ok()) return imported;
  const SymbolId limit = raw_bytes_ ? 256 : symbolizer->IdLimit();
  auto window = MakeWindow(window_spec_, raw_bytes_, clock_);
  if (auto imported = window->ImportState(state.window, limit); !imported.ok()) return imported;
  if (state.cumulative.size() > limit) {
    return Error{"checkpoint counts more symbols than the symbolizer knows"};
  }
  std::lock_guard keys_lock(keys_mutex_);
  std::lock_guard lock(mutex_);
  std::unique_lock symbolizer_lock(symbolizer_mutex_);
  symbolizer_ = std::move(symbolizer);
  token_symbolizer_ = tokens_ ? dynamic_cast<TokenSymbolizer*>(symbolizer_.get()) : nullptr;
  window_ = std::move(window);
  keys_.clear();
  if (raw_bytes_) {
    std::fill(std::begin(byte_counts_), std::end(byte_counts_), 0);
    std::copy(state.cumulative.begin(), state.cumulative.end(), byte_counts_);
    cumulative_.clear();
  } else {
    cumulative_ = state.cumulative;
  }
  symbols_total_ = state.symbols_total;
  records_total_ = state.records_total;
  return Ok{};
}

}  // namespace codedrift
