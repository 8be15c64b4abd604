// Fuzz target: the tokens symbolizer's scan of runs of lines, with and without its line memo.
// Property: for any delimiters, digit masking, max_distinct and any bytes cut into runs at any
// points, a symbolizer that scans with a memo stops before the same line and gives the same ids
// as one that scans token by token, run after run (the memo carried across runs, the table
// filling up as it goes), and both give the same id to the same token.
#include <algorithm>
#include <string>
#include <vector>

#include "fuzz_check.h"
#include "fuzz_chunks.h"
#include "line_memo.h"
#include "token_symbolizer.h"

extern "C" int LLVMFuzzerTestOneInput(const uint8_t* data, size_t size) {
  using namespace codedrift;
  using namespace codedrift::fuzz;
  FuzzReader reader(data, size);
  TokenOptions options;
  const uint8_t flags = reader.Byte();
  options.mask_digits = (flags & 1) != 0;
  options.max_distinct = 1 + reader.Byte() % 64;
  options.delimiters.clear();
  for (uint8_t n = 1 + reader.Byte() % 4; n > 0; --n) {
    options.delimiters += static_cast<char>(reader.Byte());
  }
  const std::vector<size_t> run_sizes = TakeChunkSizes(reader);

  TokenSymbolizer with_memo(options);
  TokenSymbolizer plain(options);
  LineMemo memo;
  // Each run twice, so that the memo also answers from lines it has just remembered.
  ForEachChunk(reader.Rest(), run_sizes, [&](std::string_view run) {
    for (int pass = 0; pass < 2; ++pass) {
      std::vector<SymbolId> expected(pass, 9);  // ids already there are kept
      std::vector<SymbolId> actual(pass, 9);
      const size_t plain_done = plain.AppendKnownLines(run, expected);
      FUZZ_CHECK(with_memo.AppendKnownLines(run, actual, &memo) == plain_done);
      FUZZ_CHECK(actual == expected);
      plain.AppendLines(run.substr(plain_done), expected);
      with_memo.AppendLines(run.substr(plain_done), actual);
      FUZZ_CHECK(actual == expected);
    }
  });
  FUZZ_CHECK(with_memo.IdLimit() == plain.IdLimit());
  for (SymbolId id = 0; id < plain.IdLimit(); ++id) {
    FUZZ_CHECK(with_memo.KeyOf(id) == plain.KeyOf(id));
  }
  return 0;
}
