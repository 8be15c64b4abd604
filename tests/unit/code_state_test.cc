#include "codedrift/code_state.h"

#include <gtest/gtest.h>

namespace codedrift {
namespace {

using std::chrono::minutes;
using std::chrono::seconds;

Evaluation WithSaving(double saving, double lower, uint64_t symbols = 1'000'000) {
  Evaluation e;
  e.window_symbols = symbols;
  e.kraft_sum = 1.0;
  e.deployed_mean_bits = 5.0;
  e.saving_ratio = saving;
  e.saving_lower_ratio = lower;
  e.payback_seconds = 10;
  return e;
}

CodeStateRule Rule() {
  CodeStateRule rule;
  rule.saving = 0.05;
  rule.hold = minutes(10);
  rule.min_symbols = 100000;
  rule.cooldown = minutes(60);
  rule.max_payback = std::chrono::hours(24);
  return rule;
}

struct Step {
  int at_minutes;
  double saving;
  double lower;
  CodeState expect;
  bool expect_alert;
};

// Each row feeds one evaluation and checks the state after it.
TEST(CodeStateMachine, TransitionsFollowTheRule) {
  const std::vector<Step> steps = {
      {0, 0.02, 0.01, CodeState::kFit, false},        // under threshold
      {1, 0.08, 0.06, CodeState::kDrifting, false},   // holds: drifting
      {5, 0.08, 0.045, CodeState::kDrifting, false},  // above release level (4%): still held
      {11, 0.08, 0.06, CodeState::kStale, true},      // held for 10 min: stale, alert
      {12, 0.02, 0.01, CodeState::kFit, false},       // released
      {13, 0.08, 0.06, CodeState::kDrifting, false},
      {23, 0.08, 0.06, CodeState::kStale, false},  // within the 60 min cooldown: no alert
      {24, 0.05, 0.035, CodeState::kFit, false},   // below release level
      {80, 0.08, 0.06, CodeState::kDrifting, false},
      {90, 0.08, 0.06, CodeState::kStale, true},  // cooldown over: alert again
  };
  CodeStateMachine machine(Rule());
  for (const Step& step : steps) {
    auto change = machine.Update(WithSaving(step.saving, step.lower), minutes(step.at_minutes));
    EXPECT_EQ(machine.state(), step.expect) << "at minute " << step.at_minutes;
    EXPECT_EQ(change.has_value() && change->alert, step.expect_alert)
        << "at minute " << step.at_minutes;
  }
  EXPECT_EQ(machine.alerts(), 2u);
}

TEST(CodeStateMachine, NoVerdictOnTooFewSymbols) {
  CodeStateMachine machine(Rule());
  EXPECT_FALSE(machine.Update(WithSaving(0.5, 0.4, 99'999), minutes(0)).has_value());
  EXPECT_EQ(machine.state(), CodeState::kFit);
  EXPECT_EQ(machine.reason(), "window holds 99999 of the 100000 symbols needed for a verdict");
}

TEST(CodeStateMachine, SlowPaybackBlocksTheAlert) {
  CodeStateMachine machine(Rule());
  Evaluation e = WithSaving(0.3, 0.2);
  e.payback_seconds = 2 * 86400;
  machine.Update(e, minutes(0));
  EXPECT_EQ(machine.state(), CodeState::kFit);
  EXPECT_NE(machine.reason().find("to pay back"), std::string::npos) << machine.reason();
}

TEST(CodeStateMachine, ZeroHoldGoesStraightToStale) {
  CodeStateRule rule = Rule();
  rule.hold = seconds(0);
  CodeStateMachine machine(rule);
  auto change = machine.Update(WithSaving(0.08, 0.07), minutes(1));
  ASSERT_TRUE(change.has_value());
  EXPECT_EQ(change->to, CodeState::kStale);
  EXPECT_TRUE(change->alert);
}

TEST(CodeStateMachine, ReasonStatesSavingBoundAndUnknownRate) {
  Evaluation e = WithSaving(0.079, 0.068);
  e.unknown_per_second = 412;
  EXPECT_EQ(CodeStateMachine::Explain(e, Rule()),
            "retrained code would save 7.9% (lower bound 6.8%) of coded bits; "
            "412 unknown symbols/s");
}

TEST(CodeStateMachine, ResetReturnsToFit) {
  CodeStateMachine machine(Rule());
  machine.Update(WithSaving(0.08, 0.06), minutes(0));
  ASSERT_EQ(machine.state(), CodeState::kDrifting);
  auto change = machine.Reset(minutes(1), "new table loaded");
  ASSERT_TRUE(change.has_value());
  EXPECT_EQ(machine.state(), CodeState::kFit);
  EXPECT_EQ(machine.reason(), "new table loaded");
}

}  // namespace
}  // namespace codedrift
