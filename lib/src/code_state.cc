#include "codedrift/code_state.h"

#include <cmath>
#include <cstdio>

namespace codedrift {
namespace {

std::string Percent(double ratio) {
  char text[32];
  std::snprintf(text, sizeof text, "%.1f%%", ratio * 100.0);
  return text;
}

std::string Rate(double per_second) {
  char text[32];
  std::snprintf(text, sizeof text, "%.0f", per_second);
  return text;
}

}  // namespace

const char* CodeStateName(CodeState state) {
  switch (state) {
    case CodeState::kFit:
      return "fit";
    case CodeState::kDrifting:
      return "drifting";
    case CodeState::kStale:
      return "stale";
  }
  return "?";
}

std::string CodeStateMachine::Explain(const Evaluation& e, const CodeStateRule& rule) {
  if (std::isnan(e.kraft_sum)) return "no deployed code table to measure";
  if (e.window_symbols < rule.min_symbols) {
    return "window holds " + std::to_string(e.window_symbols) + " of the " +
           std::to_string(rule.min_symbols) + " symbols needed for a verdict";
  }
  if (!e.saving_ratio) {
    return e.deployed_mean_bits ? "not enough data in both window halves to estimate a saving"
                                : "deployed table cannot code every symbol and has no escape";
  }
  std::string text = "retrained code would save " + Percent(*e.saving_ratio);
  if (e.saving_lower_ratio) text += " (lower bound " + Percent(*e.saving_lower_ratio) + ")";
  text += " of coded bits";
  if (e.unknown_per_second > 0) text += "; " + Rate(e.unknown_per_second) + " unknown symbols/s";
  if (rule.max_payback && e.payback_seconds &&
      *e.payback_seconds > std::chrono::duration<double>(*rule.max_payback).count()) {
    text += "; the new table would take " + Rate(*e.payback_seconds) + " s to pay back";
  }
  if (!e.saving_lower_ratio || *e.saving_lower_ratio < rule.saving) {
    text += "; threshold " + Percent(rule.saving);
  }
  return text;
}

bool CodeStateMachine::Holds(const Evaluation& e, double threshold) const {
  if (e.window_symbols < rule_.min_symbols || !e.saving_lower_ratio) return false;
  if (*e.saving_lower_ratio < threshold) return false;
  if (rule_.max_payback) {
    const double limit = std::chrono::duration<double>(*rule_.max_payback).count();
    if (!e.payback_seconds || *e.payback_seconds > limit) return false;
  }
  return true;
}

std::optional<StateChange> CodeStateMachine::Update(const Evaluation& e,
                                                    std::chrono::nanoseconds now) {
  const bool engaged = state_ != CodeState::kFit;
  const double threshold = engaged ? rule_.saving * (1.0 - rule_.hysteresis) : rule_.saving;
  const bool holds = Holds(e, threshold);
  reason_ = Explain(e, rule_);
  if (!holds) {
    condition_since_.reset();
    if (engaged) return MoveTo(CodeState::kFit, now, false, reason_);
    return std::nullopt;
  }
  if (!condition_since_) condition_since_ = now;
  if (state_ == CodeState::kFit) {
    return MoveTo(now - *condition_since_ >= rule_.hold ? CodeState::kStale : CodeState::kDrifting,
                  now, false, reason_);
  }
  if (state_ == CodeState::kDrifting && now - *condition_since_ >= rule_.hold) {
    return MoveTo(CodeState::kStale, now, false, reason_);
  }
  return std::nullopt;
}

std::optional<StateChange> CodeStateMachine::MoveTo(CodeState to, std::chrono::nanoseconds now,
                                                    bool alert, std::string reason) {
  if (to == state_) return std::nullopt;
  StateChange change{state_, to, alert, std::move(reason)};
  if (to == CodeState::kStale) {
    change.alert = !last_alert_ || now - *last_alert_ >= rule_.cooldown;
    if (change.alert) {
      last_alert_ = now;
      ++alerts_;
    }
  }
  state_ = to;
  entered_at_ = now;
  reason_ = change.reason;
  return change;
}

std::optional<StateChange> CodeStateMachine::Reset(std::chrono::nanoseconds now,
                                                   const std::string& reason) {
  condition_since_.reset();
  return MoveTo(CodeState::kFit, now, false, reason);
}

void CodeStateMachine::Restore(CodeState state, std::chrono::nanoseconds entered_at,
                               std::optional<std::chrono::nanoseconds> condition_since,
                               std::optional<std::chrono::nanoseconds> last_alert,
                               uint64_t alerts) {
  state_ = state;
  entered_at_ = entered_at;
  condition_since_ = condition_since;
  last_alert_ = last_alert;
  alerts_ = alerts;
}

}  // namespace codedrift
