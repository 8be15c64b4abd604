// The Synthesizer: one engine, draws in record order, values written through scenario_text.
#include <algorithm>
#include <cmath>

#include "codedrift/scenario.h"

#include "scenario_text.h"

namespace codedrift {

Synthesizer::Synthesizer(Scenario scenario, uint64_t seed)
    : scenario_(std::move(scenario)), engine_(seed) {
  if (!scenario_.phases.empty()) state_.resize(scenario_.phases[0].fields.size());
  EnterPhase(0);
}

void Synthesizer::EnterPhase(size_t phase) {
  phase_ = phase;
  in_phase_ = 0;
  samplers_.clear();
  message_pick_.reset();
  if (phase_ >= scenario_.phases.size()) return;
  const ScenarioPhase& current = scenario_.phases[phase_];
  std::vector<double> weights;
  for (const ScenarioMessage& message : current.messages) weights.push_back(message.weight);
  message_pick_.emplace(weights);
  samplers_.resize(current.fields.size());
  for (size_t i = 0; i < current.fields.size(); ++i) {
    const FieldShape& shape = current.fields[i].shape;
    if (const auto* choice = std::get_if<ChoiceField>(&shape)) {
      samplers_[i].choice.emplace(choice->weights);
    } else if (const auto* number = std::get_if<NumberField>(&shape);
               number != nullptr && number->distribution == Distribution::kNormal &&
               number->high > number->low) {
      samplers_[i].normal.emplace(number->Mean(), number->Sd(), number->low, number->high);
    }
  }
}

void Synthesizer::SkipToPhase(size_t phase) {
  while (phase_ < phase && phase_ < scenario_.phases.size()) {
    if (in_phase_ >= scenario_.phases[phase_].records) {
      EnterPhase(phase_ + 1);
    } else {
      Next();
    }
  }
}

std::optional<SyntheticRecord> Synthesizer::Next() {
  while (phase_ < scenario_.phases.size() && in_phase_ >= scenario_.phases[phase_].records) {
    EnterPhase(phase_ + 1);
  }
  if (phase_ >= scenario_.phases.size()) return std::nullopt;
  const ScenarioPhase& phase = scenario_.phases[phase_];
  now_ = phase.start + phase.OffsetOf(in_phase_);
  const ScenarioMessage& message = phase.messages[message_pick_->Pick(engine_)];
  line_.clear();
  if (message.layout == RecordLayout::kJson) line_ += '{';
  for (size_t i = 0; i < message.fields.size(); ++i) {
    const size_t field = message.fields[i];
    const ScenarioField& spec = phase.fields[field];
    value_.clear();
    DrawValue(field);
    switch (message.layout) {
      case RecordLayout::kPairs:
        if (i > 0) line_ += ' ';
        line_ += spec.key;
        line_ += '=';
        line_ += value_;
        break;
      case RecordLayout::kCsv:
        if (i > 0) line_ += ',';
        scenario_text::AppendCsvValue(value_, line_);
        break;
      case RecordLayout::kJson:
        if (i > 0) line_ += ',';
        scenario_text::AppendJsonString(spec.key, line_);
        line_ += ':';
        if (scenario_text::IsJsonNumber(spec.shape)) {
          line_ += value_;
        } else {
          scenario_text::AppendJsonString(value_, line_);
        }
        break;
    }
  }
  if (message.layout == RecordLayout::kJson) line_ += '}';
  line_ += '\n';
  SyntheticRecord record{line_, phase_, index_, now_};
  ++in_phase_;
  ++index_;
  return record;
}

void Synthesizer::DrawValue(size_t field) {
  const FieldShape& shape = scenario_.phases[phase_].fields[field].shape;
  FieldState& state = state_[field];
  if (const auto* number = std::get_if<NumberField>(&shape)) {
    DrawNumber(*number, field);
  } else if (const auto* choice = std::get_if<ChoiceField>(&shape)) {
    value_ += choice->values[samplers_[field].choice->Pick(engine_)];
  } else if (const auto* token = std::get_if<TokenField>(&shape)) {
    const uint64_t spread = static_cast<uint64_t>(token->max_length - token->min_length);
    const uint64_t length = static_cast<uint64_t>(token->min_length) +
                            (spread == 0 ? 0 : sampling::UniformIndex(engine_, spread + 1));
    for (uint64_t i = 0; i < length; ++i) {
      value_ += token->chars[sampling::UniformIndex(engine_, token->chars.size())];
    }
  } else if (const auto* counter = std::get_if<CounterField>(&shape)) {
    // Unsigned steps wrap instead of overflowing; the range checks keep real runs far away.
    int64_t value = state.counter ? static_cast<int64_t>(static_cast<uint64_t>(*state.counter) +
                                                         static_cast<uint64_t>(counter->step))
                                  : counter->from;
    if (counter->wrap > 0) {
      const auto wrap = static_cast<int64_t>(counter->wrap);
      value = (value % wrap + wrap) % wrap;
    }
    state.counter = value;
    scenario_text::AppendScaled(value, 0, counter->base, counter->pad, value_);
  } else if (const auto* time = std::get_if<TimeField>(&shape)) {
    scenario_text::AppendTime(scenario_.start_unix_seconds, now_, *time, value_);
  } else if (const auto* constant = std::get_if<ConstantField>(&shape)) {
    value_ += constant->value;
  }
}

void Synthesizer::DrawNumber(const NumberField& number, size_t field) {
  const scenario_text::Grid grid = scenario_text::GridOf(number.low, number.high, number.decimals)
                                       .value_or(scenario_text::Grid{});
  const double scale = static_cast<double>(scenario_text::Pow10(number.decimals));
  int64_t scaled = grid.low;
  switch (number.distribution) {
    case Distribution::kUniform:
      scaled = grid.low + static_cast<int64_t>(sampling::UniformIndex(
                              engine_, static_cast<uint64_t>(grid.high - grid.low) + 1));
      break;
    case Distribution::kNormal: {
      const auto& normal = samplers_[field].normal;
      const double x = normal ? normal->Draw(engine_) : number.low;
      scaled = std::llround(x * scale);
      break;
    }
    case Distribution::kWalk: {
      // Reflect at the ends so the walk neither sticks to them nor leaves the range; a retuned
      // range pulls the walk inside first.
      std::optional<double>& walk = state_[field].walk;
      double x = std::clamp(walk.value_or(number.Mean()), number.low, number.high);
      if (walk) x += number.Step() * (2 * sampling::Uniform01(engine_) - 1);
      if (x < number.low) x = 2 * number.low - x;
      if (x > number.high) x = 2 * number.high - x;
      x = std::clamp(x, number.low, number.high);
      walk = x;
      scaled = std::llround(x * scale);
      break;
    }
  }
  scaled = std::clamp(scaled, grid.low, grid.high);
  scenario_text::AppendScaled(scaled, number.decimals, number.base, number.pad, value_);
  value_ += number.unit;
}

}  // namespace codedrift
