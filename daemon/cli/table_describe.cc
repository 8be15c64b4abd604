#include "table_describe.h"

namespace codedrift::cli {

std::string CoverageProblem(const CodeTable& table) {
  if (table.CoversWholeAlphabet()) return "";
  return "the table has no escape and does not cover every " + table.alphabet.ToString() +
         " symbol: symbols outside it cannot be coded, so the daemon will not deploy it";
}

}  // namespace codedrift::cli
