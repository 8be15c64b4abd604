#include "codedrift/history.h"

#include <gtest/gtest.h>

namespace codedrift {
namespace {

TEST(History, KeepsRecentPointsAndDownsamplesOlderOnes) {
  History history(/*fine_capacity=*/10, /*coarse_every=*/5, /*coarse_capacity=*/3);
  for (int i = 0; i < 40; ++i) history.Add(HistoryPoint{.unix_seconds = double(i)});
  const auto points = history.Points();
  ASSERT_EQ(points.size(), 13u);
  // Fine: the last ten (30..39). Coarse: every fifth evicted point (0, 5, ..., 25), last three.
  EXPECT_EQ(points[0].unix_seconds, 15);
  EXPECT_EQ(points[1].unix_seconds, 20);
  EXPECT_EQ(points[2].unix_seconds, 25);
  for (int i = 0; i < 10; ++i) EXPECT_EQ(points[3 + i].unix_seconds, 30 + i);
}

}  // namespace
}  // namespace codedrift
