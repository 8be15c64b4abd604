#include "codedrift/model.h"

#include <algorithm>

#include "codedrift/byte_histogram.h"

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

}  // namespace

Model::Model(SymbolizerSpec symbolizer, WindowSpec window, const Clock& clock)
    : symbolizer_spec_(std::move(symbolizer)),
      window_spec_(window),
      clock_(clock),
      raw_bytes_(symbolizer_spec_.kind == AlphabetKind::kBytes && symbolizer_spec_.block == 1),
      symbolizer_(MakeSymbolizer(symbolizer_spec_)),
      window_(MakeWindow(window_spec_, raw_bytes_, clock)) {
}

void Model::Ingest(std::string_view record) {
  std::lock_guard lock(mutex_);
  ++records_total_;
  if (raw_bytes_) {
    CountBytes(record, byte_counts_);
    window_->PushBytes({reinterpret_cast<const uint8_t*>(record.data()), record.size()});
    symbols_total_ += record.size();
    return;
  }
  scratch_ids_.clear();
  symbolizer_->Append(record, scratch_ids_);
  const SymbolId limit = symbolizer_->IdLimit();
  if (cumulative_.size() < limit) cumulative_.resize(limit, 0);
  for (SymbolId id : scratch_ids_) ++cumulative_[id];
  window_->PushIds(scratch_ids_);
  symbols_total_ += scratch_ids_.size();
}

void Model::IngestRun(std::string_view run, uint64_t records) {
  std::lock_guard lock(mutex_);
  records_total_ += records;
  if (raw_bytes_) {
    CountBytes(run, byte_counts_);
    window_->PushBytes({reinterpret_cast<const uint8_t*>(run.data()), run.size()});
    symbols_total_ += run.size();
    return;
  }
  scratch_ids_.clear();
  while (!run.empty()) {
    const size_t end = run.find('\n');
    const size_t length = end == std::string_view::npos ? run.size() : end + 1;
    symbolizer_->Append(run.substr(0, length), scratch_ids_);
    run.remove_prefix(length);
  }
  const SymbolId limit = symbolizer_->IdLimit();
  if (cumulative_.size() < limit) cumulative_.resize(limit, 0);
  for (SymbolId id : scratch_ids_) ++cumulative_[id];
  window_->PushIds(scratch_ids_);
  symbols_total_ += scratch_ids_.size();
}

ModelSample Model::Sample() {
  ModelSample sample;
  sample.alphabet = symbolizer_spec_.alphabet();
  std::lock_guard lock(mutex_);
  const SymbolId limit = raw_bytes_ ? 256 : symbolizer_->IdLimit();
  // Keys are append-only, so only ids new since the last sample are looked up.
  for (SymbolId id = static_cast<SymbolId>(keys_.size()); id < limit; ++id) {
    keys_.push_back(symbolizer_->KeyOf(id));
  }
  sample.window = window_->Clone();
  sample.keys = keys_;
  if (raw_bytes_) {
    sample.cumulative.assign(std::begin(byte_counts_), std::end(byte_counts_));
  } else {
    sample.cumulative = cumulative_;
    sample.cumulative.resize(limit, 0);
  }
  sample.symbols_total = symbols_total_;
  sample.records_total = records_total_;
  sample.skipped_records = symbolizer_->skipped_records();
  sample.taken_at = clock_.Now();
  return sample;
}

uint64_t Model::window_memory_bytes() {
  std::lock_guard lock(mutex_);
  return window_->memory_bytes();
}

ModelState Model::ExportState() {
  ModelState state;
  std::lock_guard lock(mutex_);
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
  std::lock_guard lock(mutex_);
  symbolizer_ = std::move(symbolizer);
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
