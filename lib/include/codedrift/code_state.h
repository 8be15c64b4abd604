// CodeStateMachine: a model's code state (fit, drifting, stale) from its evaluations and the
// operator's alert rule. Pure logic on an injected time; one instance per model, not
// thread-safe.
#pragma once

#include <chrono>
#include <cstdint>
#include <optional>
#include <string>

#include "codedrift/evaluator.h"

namespace codedrift {

enum class CodeState { kFit = 0, kDrifting = 1, kStale = 2 };
const char* CodeStateName(CodeState state);

struct CodeStateRule {
  double saving = 0.05;                                      // threshold on the lower bound
  std::chrono::nanoseconds hold = std::chrono::minutes(10);  // `for`
  uint64_t min_symbols = 100000;
  double confidence = 0.95;
  std::chrono::nanoseconds cooldown = std::chrono::hours(1);
  std::optional<std::chrono::nanoseconds> max_payback = std::chrono::hours(24);
  // Once drifting or stale, the condition is released only below (1 - hysteresis) x threshold,
  // so a value hovering at the threshold does not flap.
  double hysteresis = 0.2;
};

struct StateChange {
  CodeState from = CodeState::kFit;
  CodeState to = CodeState::kFit;
  bool alert = false;  // entering stale outside the cooldown: notify and write a proposal
  std::string reason;
};

class CodeStateMachine {
 public:
  explicit CodeStateMachine(CodeStateRule rule) : rule_(rule) {}

  // Feeds one evaluation; returns the change it caused, if any.
  std::optional<StateChange> Update(const Evaluation& evaluation, std::chrono::nanoseconds now);
  // A new table was deployed: back to fit, timers cleared (the cooldown stays).
  std::optional<StateChange> Reset(std::chrono::nanoseconds now, const std::string& reason);

  CodeState state() const { return state_; }
  std::chrono::nanoseconds entered_at() const { return entered_at_; }
  const std::string& reason() const { return reason_; }
  uint64_t alerts() const { return alerts_; }
  const CodeStateRule& rule() const { return rule_; }
  void set_rule(const CodeStateRule& rule) { rule_ = rule; }

  // Plain-words reason for an evaluation under a rule (also used when nothing changes).
  static std::string Explain(const Evaluation& evaluation, const CodeStateRule& rule);

  // Restores persisted state (checkpoints).
  void Restore(CodeState state, std::chrono::nanoseconds entered_at,
               std::optional<std::chrono::nanoseconds> condition_since,
               std::optional<std::chrono::nanoseconds> last_alert, uint64_t alerts);
  std::optional<std::chrono::nanoseconds> condition_since() const { return condition_since_; }
  std::optional<std::chrono::nanoseconds> last_alert() const { return last_alert_; }

 private:
  bool Holds(const Evaluation& evaluation, double threshold) const;
  std::optional<StateChange> MoveTo(CodeState to, std::chrono::nanoseconds now, bool alert,
                                    std::string reason);

  CodeStateRule rule_;
  CodeState state_ = CodeState::kFit;
  std::chrono::nanoseconds entered_at_{0};
  std::optional<std::chrono::nanoseconds> condition_since_;
  std::optional<std::chrono::nanoseconds> last_alert_;
  std::string reason_ = "no evaluation yet";
  uint64_t alerts_ = 0;
};

}  // namespace codedrift
