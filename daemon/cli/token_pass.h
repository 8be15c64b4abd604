// Tokens on two threads: the capture is cut at a line boundary near its middle, each half goes
// through its own token symbolizer, and the second half's ids are renumbered into the first's
// afterwards, so every count equals that of one sequential pass (max_distinct overflow and
// block boundaries included). When the second half's own symbolizer overflows, renumbering
// cannot be exact (its overflow may hide tokens the first half knows); but a symbolizer whose
// table is full never changes again, so as soon as the first half's table fills, a copy of it
// redoes the second half on the second thread, with the same ids. If the first half ends
// without filling it, its symbolizer carries on into the second half until it is full, and a
// copy then takes the last part of the stream on the second thread.
#pragma once

#include <set>

#include "codedrift/result.h"
#include "codedrift/symbolizer.h"

#include "capture_reader.h"
#include "progress.h"
#include "stream_counts.h"

namespace codedrift::cli {

// The halves are split where CountStream splits them for tokens, so `older` is the first
// thread's half. `progress` may be null.
Result<StreamCounts> CountTokensInHalves(const CaptureStream& stream, const TokenOptions& options,
                                         const std::set<int>& orders, bool parallel,
                                         Progress* progress);

}  // namespace codedrift::cli
