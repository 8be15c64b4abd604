// StreamRuntime: records reach every model of the current list, and a list retired by a reload
// is freed once no delivery holds it (a daemon reloaded every minute must not grow).
#include <chrono>
#include <memory>
#include <string>

#include <gtest/gtest.h>

#include "codedrift/clock.h"

#include "stream_runtime.h"

namespace codedrift {
namespace {

ModelConfig BytesModel(const std::string& name) {
  ModelConfig config;
  config.name = name;
  config.window.symbols = 1024;
  return config;
}

std::shared_ptr<ModelRuntime> MakeRuntime(const Clock& clock, const std::string& name) {
  return std::make_shared<ModelRuntime>("uplink", BytesModel(name), clock,
                                        std::chrono::seconds(10));
}

TEST(StreamRuntime, DeliversEachRecordToEveryModelOfTheCurrentList) {
  SteadyClock clock;
  StreamRuntime stream(StreamConfig{.name = "uplink"});
  auto first = MakeRuntime(clock, "a");
  auto second = MakeRuntime(clock, "b");
  stream.SetModels({first, second});
  stream.Deliver("abc\n");
  stream.DeliverRun("de\nf\n", 2);
  for (const auto& model : {first, second}) {
    EXPECT_EQ(model->ExportCheckpoint().model.records_total, 3u) << model->name();
  }
}

TEST(StreamRuntime, ARetiredListIsFreedOnceNothingHoldsIt) {
  SteadyClock clock;
  StreamRuntime stream(StreamConfig{.name = "uplink"});
  auto retired = MakeRuntime(clock, "a");
  const std::weak_ptr<ModelRuntime> watch = retired;
  stream.SetModels({retired});
  retired.reset();
  {
    const auto held = stream.models();  // a delivery or an evaluation pass in progress
    stream.SetModels({MakeRuntime(clock, "a")});
    EXPECT_FALSE(watch.expired()) << "freed while a holder still iterates it";
    EXPECT_EQ((*held)[0], watch.lock());
  }
  EXPECT_TRUE(watch.expired()) << "the retired list outlived its last holder";
  stream.Deliver("still delivers\n");
  EXPECT_EQ(stream.models()->size(), 1u);
}

}  // namespace
}  // namespace codedrift
