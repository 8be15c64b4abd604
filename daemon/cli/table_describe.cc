#include "table_describe.h"

namespace codedrift::cli {

std::string KindName(CodeKind kind) {
  switch (kind) {
    case CodeKind::kPrefix:
      return "prefix";
    case CodeKind::kFixed:
      return "fixed";
    case CodeKind::kFrequencies:
      return "frequencies";
  }
  return "?";
}

std::string CoverageProblem(const CodeTable& table) {
  if (table.CoversWholeAlphabet()) return "";
  return "the table has no escape and does not cover every " + table.alphabet.ToString() +
         " symbol: symbols outside it cannot be coded, so the daemon will not deploy it";
}

}  // namespace codedrift::cli
