// The code-table file format: round trips, every rejection with its file:line and reason, and
// file-system failures.
#include "codedrift/code_table.h"

#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <random>
#include <string>
#include <vector>

#include <gtest/gtest.h>

#include "codedrift/canonical_code.h"

#include <sys/stat.h>
#include <unistd.h>

namespace codedrift {
namespace {

const std::string kTables = std::string(CODEDRIFT_TEST_DATA) + "/tables/";

// Field-by-field equality (CodeTable and SymbolCounts have no operator==).
void ExpectSameTable(const CodeTable& a, const CodeTable& b) {
  EXPECT_EQ(a.alphabet, b.alphabet);
  EXPECT_EQ(a.kind, b.kind);
  EXPECT_EQ(a.max_length, b.max_length);
  ASSERT_EQ(a.escape.has_value(), b.escape.has_value());
  if (a.escape) {
    EXPECT_EQ(a.escape->length, b.escape->length);
    EXPECT_EQ(a.escape->literal_bits, b.escape->literal_bits);
  }
  EXPECT_EQ(a.lengths, b.lengths);
  EXPECT_EQ(a.fixed_bits, b.fixed_bits);
  EXPECT_EQ(a.frequencies, b.frequencies);
  EXPECT_EQ(a.escape_frequency, b.escape_frequency);
  EXPECT_EQ(a.precision_bits, b.precision_bits);
  ASSERT_EQ(a.training_counts.has_value(), b.training_counts.has_value());
  if (a.training_counts) {
    EXPECT_EQ(a.training_counts->alphabet(), b.training_counts->alphabet());
    EXPECT_EQ(a.training_counts->Sorted(), b.training_counts->Sorted());
  }
  EXPECT_EQ(a.metadata, b.metadata);
}

// Formats, parses back, and checks the table and its text survive unchanged.
void ExpectRoundTrip(const CodeTable& table) {
  const std::string text = FormatCodeTable(table);
  auto parsed = ParseCodeTable(text, "round.table");
  ASSERT_TRUE(parsed.ok()) << parsed.error().message << "\n" << text;
  ExpectSameTable(table, parsed.value());
  EXPECT_EQ(FormatCodeTable(parsed.value()), text);
}

// A fresh directory under the system temp dir, removed with everything in it at scope exit.
class TempDir {
 public:
  TempDir() {
    std::string pattern = (std::filesystem::temp_directory_path() / "codedrift_tables_XXXXXX");
    path_ = ::mkdtemp(pattern.data());
  }
  ~TempDir() { std::filesystem::remove_all(path_); }
  std::string File(const std::string& name) const { return path_ + "/" + name; }
  const std::string& path() const { return path_; }

 private:
  std::string path_;
};

void WriteFile(const std::string& path, const std::string& bytes) {
  std::ofstream out(path, std::ios::binary);
  out << bytes;
}

TEST(CodeTableFormat, PrefixBytesTableRoundTrips) {
  CodeTable table;
  table.alphabet = Alphabet::Bytes();
  table.kind = CodeKind::kPrefix;
  table.max_length = 12;
  table.escape = EscapeCode{3, 8};
  table.lengths = {{"A", 1}, {"\n", 3}, {std::string(1, '\0'), 3}, {"\xff", 3}};
  SymbolCounts counts(Alphabet::Bytes());
  counts.Add("A", 40);
  counts.Add("\n", 9);
  counts.Add("z", 1);
  table.training_counts = counts;
  table.metadata = {{"created", "2024-05-01T00:00:00Z"},
                    {"saving", "0.125"},
                    {"note", "quote \" and backslash \\ and\nnewline"}};
  ExpectRoundTrip(table);
}

TEST(CodeTableFormat, BlockBytesAndFieldTablesRoundTrip) {
  CodeTable pairs;
  pairs.alphabet = Alphabet::Bytes(2);
  pairs.lengths = {{"AB", 1}, {"CD", 2}};
  ExpectRoundTrip(pairs);

  CodeTable fixed;
  fixed.alphabet = Alphabet::Field(12);
  fixed.kind = CodeKind::kFixed;
  fixed.fixed_bits = 12;
  SymbolCounts counts(Alphabet::Field(12));
  counts.Add(FieldKey(4095), 3);
  counts.Add(FieldKey(0), 1);
  fixed.training_counts = counts;
  ExpectRoundTrip(fixed);
}

TEST(CodeTableFormat, FrequencyTokenTableRoundTripsAwkwardTokens) {
  CodeTable table;
  table.alphabet = Alphabet::Tokens();
  table.kind = CodeKind::kFrequencies;
  table.precision_bits = 12;
  table.escape = EscapeCode{0, 8};
  table.escape_frequency = 5;
  // Reserved tokens, YAML specials, quotes, control bytes, valid and invalid UTF-8.
  const std::vector<std::string> tokens = {std::string(kEndOfRecordToken),
                                           std::string(kOverflowToken),
                                           "GET",
                                           "null",
                                           "~",
                                           "true",
                                           "- x",
                                           "#tag",
                                           "a: b",
                                           "say \"hi\"",
                                           "back\\slash",
                                           "\t",
                                           std::string("\x01\x7f", 2),
                                           "\xc3\xa9t\xc3\xa9",
                                           "\xff\xfe",
                                           "\xc2\x85",
                                           "0x41",
                                           "12",
                                           "-",
                                           "'",
                                           "&anchor",
                                           "*ref",
                                           "{}",
                                           "[x]",
                                           "%x",
                                           "@x",
                                           "`x",
                                           "|",
                                           ">",
                                           "?",
                                           " lead",
                                           "trail ",
                                           ".",
                                           "..."};
  uint64_t frequency = 1;
  for (const std::string& token : tokens) table.frequencies[token] = frequency++;
  ExpectRoundTrip(table);
}

// Property: any token bytes (no newline, as the tokenizer guarantees) survive the format.
TEST(CodeTableFormat, RandomTokensRoundTrip) {
  std::mt19937 random(20240501);
  std::uniform_int_distribution<int> byte(0, 255);
  std::uniform_int_distribution<int> size(1, 8);
  for (int round = 0; round < 50; ++round) {
    CodeTable table;
    table.alphabet = Alphabet::Tokens();
    table.escape = EscapeCode{6, 8};
    for (int i = 0; i < 20; ++i) {
      std::string token;
      for (int n = size(random); n > 0; --n) {
        char c = static_cast<char>(byte(random));
        token += c == '\n' ? 'n' : c;
      }
      table.lengths[token] = 6;
    }
    ExpectRoundTrip(table);
  }
}

TEST(CodeTableFormat, WritesHeaderAndSymbolsInOrder) {
  CodeTable table;
  table.alphabet = Alphabet::Field(12);
  table.lengths = {{FieldKey(300), 2}, {FieldKey(2), 2}, {FieldKey(10), 1}};
  const std::string text = FormatCodeTable(table);
  EXPECT_EQ(text.rfind("# codedrift code table\n", 0), 0u) << text;
  // Field values sort numerically (2 < 10 < 300), one per line.
  EXPECT_NE(text.find("lengths:\n  2: 2\n  10: 1\n  300: 2\n"), std::string::npos) << text;
}

// The three words of DESIGN.md section 5's `kind:` key.
TEST(CodeTableFormat, KindNamesAreTheFileWords) {
  EXPECT_EQ(CodeKindName(CodeKind::kPrefix), "prefix");
  EXPECT_EQ(CodeKindName(CodeKind::kFixed), "fixed");
  EXPECT_EQ(CodeKindName(CodeKind::kFrequencies), "frequencies");
}

// Escapes as code_table.h's format notes spell them (\", \\, \n, \t, \r and \xNN are YAML
// 1.2 double-quoted escapes, section 5.7 of the YAML spec, from memory); each quoted token
// reads back as the token in a table file.
TEST(CodeTableFormat, QuoteTokenEscapesAsTableFilesReadThem) {
  const std::string awkward("a\"b\\c\t\r\x01\x7f\xc3\xa9", 11);
  EXPECT_EQ(QuoteToken("GET"), "\"GET\"");
  EXPECT_EQ(QuoteToken(kOverflowToken), "\"\"");
  EXPECT_EQ(QuoteToken(kEndOfRecordToken), "\"\\n\"");
  EXPECT_EQ(QuoteToken(awkward), "\"a\\\"b\\\\c\\t\\r\\x01\\x7f\xc3\xa9\"");
  for (const std::string& token :
       {std::string("GET"), std::string(kOverflowToken), std::string(kEndOfRecordToken), awkward}) {
    auto table = ParseCodeTable(
        "table: 1\nalphabet: tokens\nkind: prefix\nlengths:\n  " + QuoteToken(token) + ": 1\n",
        "quoted.table");
    ASSERT_TRUE(table.ok()) << table.error().message;
    EXPECT_EQ(table.value().lengths.count(token), 1u) << QuoteToken(token);
  }
}

TEST(CodeTableParse, ReadsTheDesignExample) {
  // The example of DESIGN.md section 5, comments included.
  const std::string text =
      "table: 1                      # format version\n"
      "alphabet: bytes               # bytes | tokens | field:<width bits>\n"
      "kind: prefix                  # prefix | fixed | frequencies\n"
      "max_length: 15                # prefix: longest codeword allowed when retraining\n"
      "escape: {length: 9, literal_bits: 8}   # optional\n"
      "lengths:                      # prefix: symbol -> codeword length, one per line\n"
      "  0x41: 3                     # bytes are written 0xNN; tokens as YAML strings\n";
  auto table = ParseCodeTable(text, "design.table");
  ASSERT_TRUE(table.ok()) << table.error().message;
  EXPECT_EQ(table.value().lengths.at("A"), 3);
  ASSERT_TRUE(table.value().escape.has_value());
  EXPECT_EQ(table.value().escape->length, 9);
  EXPECT_EQ(table.value().escape->literal_bits, 8);
  EXPECT_EQ(table.value().max_length, 15);
}

TEST(CodeTableParse, DefaultsAndTokenSpellings) {
  auto table = ParseCodeTable(
      "table: 1\nalphabet: tokens\nkind: prefix\nlengths:\n  \"\\n\": 1\n  \"\": 2\n  GET: 2\n",
      "t.table");
  ASSERT_TRUE(table.ok()) << table.error().message;
  EXPECT_EQ(table.value().max_length, 15);  // DESIGN.md section 5 default
  EXPECT_FALSE(table.value().escape.has_value());
  EXPECT_EQ(table.value().lengths.at(std::string(kEndOfRecordToken)), 1);
  EXPECT_EQ(table.value().lengths.at(std::string(kOverflowToken)), 2);
  EXPECT_EQ(table.value().lengths.at("GET"), 2);
}

// RFC 1951 section 3.2.2, small example: A=2, B=1, C=3, D=3 give A=10, B=0, C=110, D=111 and
// a complete code.
TEST(CodeTableParse, LoadsTheRfc1951SmallExample) {
  auto table = LoadCodeTable(kTables + "rfc1951_small.table");
  ASSERT_TRUE(table.ok()) << table.error().message;
  const CodeTable& t = table.value();
  EXPECT_EQ(t.lengths, (std::map<SymbolKey, int>{{"A", 2}, {"B", 1}, {"C", 3}, {"D", 3}}));
  EXPECT_EQ(t.KraftSumValue(), 1.0);
  std::vector<int> lengths;
  for (const auto& entry : t.lengths) lengths.push_back(entry.second);
  EXPECT_TRUE(ComputeKraftSum(lengths).complete());
  const std::vector<Codeword> codes = CanonicalCodewords(lengths);
  ASSERT_EQ(codes.size(), 4u);
  EXPECT_EQ(codes[0].ToString(), "10");
  EXPECT_EQ(codes[1].ToString(), "0");
  EXPECT_EQ(codes[2].ToString(), "110");
  EXPECT_EQ(codes[3].ToString(), "111");
  EXPECT_TRUE(t.CoversWholeAlphabet() == false);  // 4 of 256 bytes, no escape
}

struct BadTable {
  const char* file;
  int line;
  const char* reason;
};

class RejectsBadTable : public testing::TestWithParam<BadTable> {};

TEST_P(RejectsBadTable, WithFileLineAndReason) {
  const BadTable& bad = GetParam();
  const std::string path = kTables + bad.file;
  auto table = LoadCodeTable(path);
  ASSERT_FALSE(table.ok()) << bad.file;
  EXPECT_EQ(table.error().message, path + ":" + std::to_string(bad.line) + ": " + bad.reason);
}

// Line numbers are 1-based lines of the fixture files (see each file).
INSTANTIATE_TEST_SUITE_P(
    Fixtures, RejectsBadTable,
    testing::Values(
        BadTable{"bad_kraft_over.table", 5,
                 "Kraft sum of the lengths is 1.25 > 1: no prefix code has these lengths"},
        BadTable{"bad_escape_does_not_fit.table", 4,
                 "escape length 9 does not fit: the lengths use Kraft sum 1, with the escape it "
                 "is 1.001953125 > 1"},
        BadTable{"bad_length_zero.table", 6,
                 "length of 0x42 must be an integer from 1 to 32, got 0"},
        BadTable{"bad_length_too_long.table", 6,
                 "length of 0x42 must be an integer from 1 to 32, got 33"},
        BadTable{"bad_length_negative.table", 5,
                 "length of 0x41 must be an integer from 1 to 32, got -2"},
        BadTable{"bad_duplicate_symbol.table", 7,
                 "duplicate symbol 0x41 in lengths (first at line 5)"},
        BadTable{"bad_outside_alphabet.table", 6,
                 "symbol '16' is not a value of a 4-bit field (expected 0..15)"},
        BadTable{"bad_unknown_key.table", 4, "unknown key 'lenghts' (did you mean 'lengths'?)"},
        BadTable{"bad_unknown_key_far.table", 4,
                 "unknown key 'owner' (expected one of: table, alphabet, kind, max_length, escape, "
                 "lengths, bits, frequencies, precision_bits, counts, metadata)"},
        BadTable{"bad_wrong_kind.table", 6,
                 "'bits' belongs to kind fixed, but this table is kind prefix"},
        BadTable{"bad_missing_kind.table", 2, "missing required key 'kind'"},
        BadTable{"bad_missing_section.table", 1,
                 "missing required key 'frequencies' (kind frequencies)"},
        BadTable{"bad_not_integer.table", 6,
                 "length of 0x42 must be an integer from 1 to 32, got '2.5' (not an integer)"},
        BadTable{"bad_not_mapping.table", 2,
                 "expected a mapping of table keys (table, alphabet, kind, ...), found a sequence"},
        BadTable{"bad_empty.table", 1, "the file is empty"},
        BadTable{"bad_comments_only.table", 1,
                 "the file holds no table (only comments or blank lines)"},
        // yaml-cpp notices the unclosed flow mapping of line 4 on line 5.
        BadTable{"bad_invalid_yaml.table", 5, "invalid YAML: end of map flow not found"},
        BadTable{"bad_version.table", 1,
                 "unsupported table format 2 (this version reads format 1)"},
        BadTable{"bad_duplicate_key.table", 6, "duplicate key 'kind' (first at line 3)"},
        BadTable{"bad_escape_missing_literal.table", 4, "escape needs 'literal_bits'"},
        BadTable{"bad_escape_wrong_kind.table", 4,
                 "escape 'length' does not fit kind frequencies (its escape has 'frequency')"},
        BadTable{"bad_frequency_zero.table", 6, "frequency of PUT must be an integer >= 1, got 0"},
        BadTable{"bad_precision_too_small.table", 5,
                 "precision_bits 1 is too small for 3 entries (escape included): each needs a "
                 "frequency >= 1 out of 2^precision_bits"},
        BadTable{"bad_fixed_too_narrow.table", 4,
                 "a 7-bit fixed code has 128 codewords, too few for the 256 symbols of bytes "
                 "(Kraft sum 2 > 1)"},
        BadTable{"bad_fixed_tokens.table", 4,
                 "kind fixed needs a bounded alphabet (bytes or field), not tokens"},
        BadTable{"bad_fixed_escape.table", 4,
                 "kind fixed takes no escape: a fixed code covers every symbol"},
        BadTable{"bad_alphabet.table", 2,
                 "unknown alphabet 'nibbles' (expected bytes, bytes:<n>, tokens or field:<width "
                 "bits>)"},
        BadTable{"bad_max_length.table", 4, "max_length must be an integer from 1 to 32, got 40"},
        BadTable{"bad_null_token.table", 6,
                 "symbol written as a YAML null (~, null or nothing); quote it, e.g. \"null\", or "
                 "write \"\" for the overflow token"},
        BadTable{"bad_metadata_nested.table", 8,
                 "metadata 'saving': expected a string, found a mapping"}));

TEST(CodeTableParse, RejectsInlineProblems) {
  auto error = [](const std::string& text) {
    auto table = ParseCodeTable(text, "in.table");
    return table.ok() ? std::string("accepted") : table.error().message;
  };
  const std::string head = "table: 1\nalphabet: bytes\nkind: prefix\n";
  // Bytes symbols must be 0xNN: a bare 65 is not a byte key.
  EXPECT_EQ(error(head + "lengths:\n  65: 1\n"),
            "in.table:5: symbol '65' is not a bytes symbol (expected 0x followed by 2 hex digits)");
  // A scalar where a mapping belongs.
  EXPECT_EQ(error(head + "lengths: 3\n"),
            "in.table:4: lengths: expected a mapping, found a scalar");
  EXPECT_EQ(error(head + "lengths: {}\nescape: {length: 1, literal_bits: 8, lenght: 2}\n"),
            "in.table:5: unknown key 'lenght' in escape (did you mean 'length'?)");
  EXPECT_EQ(error(head + "lengths: {}\nmax_length: [1]\n"),
            "in.table:5: max_length must be an integer from 1 to 32, found a sequence");
  EXPECT_EQ(error("table: one\nalphabet: bytes\nkind: prefix\nlengths: {}\n"),
            "in.table:1: table must be an integer >= 1, got 'one' (not an integer)");
  EXPECT_EQ(error("table: 1\nalphabet: bytes\nkind: huffman\n"),
            "in.table:3: unknown kind 'huffman' (expected prefix, fixed or frequencies)");
  EXPECT_EQ(error(head + "lengths: {}\n---\ntable: 1\n"),
            "in.table:6: a second YAML document; a table file holds one");
  EXPECT_EQ(error("table: 1\nalphabet: tokens\nkind: prefix\nlengths:\n  \"a\\nb\": 1\n"),
            "in.table:5: token \"a\\nb\" contains a newline (only the end-of-record token \"\\n\" "
            "may)");
  EXPECT_EQ(error(head + "lengths: {}\ncounts:\n  0x41: 3\n  0x41: 4\n"),
            "in.table:7: duplicate symbol 0x41 in counts (first at line 6)");
  // Exactly full with the escape (1/2 + 1/4 + 1/4 = 1) is fine.
  EXPECT_EQ(error(head + "escape: {length: 2, literal_bits: 8}\nlengths: {0x41: 1, 0x42: 2}\n"),
            "accepted");
}

TEST(CodeTableLoad, ExplainsFilesThatAreNotTables) {
  TempDir dir;
  auto missing = LoadCodeTable(dir.File("missing.table"));
  ASSERT_FALSE(missing.ok());
  EXPECT_EQ(missing.error().message,
            dir.File("missing.table") + ": cannot open: No such file or directory");

  auto directory = LoadCodeTable(dir.path());
  ASSERT_FALSE(directory.ok());
  EXPECT_EQ(directory.error().message, dir.path() + ": is a directory, not a code table file");

  // Invented binary garbage: a gzip-like header with NUL bytes on the second line.
  WriteFile(dir.File("binary.table"), std::string("\x1f\x8b\x08\n\x00\x00\xff", 7));
  auto binary = LoadCodeTable(dir.File("binary.table"));
  ASSERT_FALSE(binary.ok());
  EXPECT_EQ(binary.error().message,
            dir.File("binary.table") + ":1: not a text file (control byte 0x1f at offset 0)");
}

TEST(CodeTableSave, WritesAtomicallyAndReadsBack) {
  TempDir dir;
  CodeTable table;
  table.alphabet = Alphabet::Bytes();
  table.lengths = {{"A", 1}, {"B", 1}};
  const std::string path = dir.File("uplink.table");
  ASSERT_TRUE(SaveCodeTable(table, path).ok());
  table.lengths = {{"A", 1}, {"B", 2}, {"C", 2}};
  ASSERT_TRUE(SaveCodeTable(table, path).ok());  // replaces the old file
  auto loaded = LoadCodeTable(path);
  ASSERT_TRUE(loaded.ok()) << loaded.error().message;
  ExpectSameTable(table, loaded.value());
  // Nothing but the table is left in the directory (the temp file was renamed).
  std::vector<std::string> names;
  for (const auto& entry : std::filesystem::directory_iterator(dir.path())) {
    names.push_back(entry.path().filename().string());
  }
  EXPECT_EQ(names, std::vector<std::string>{"uplink.table"});
  struct stat info {};
  ASSERT_EQ(::stat(path.c_str(), &info), 0);
  EXPECT_EQ(info.st_mode & 0777, 0644u);
}

TEST(CodeTableSave, ReportsFailuresWithoutLeavingTempFiles) {
  TempDir dir;
  CodeTable table;
  table.lengths = {{"A", 1}};
  const Status no_dir = SaveCodeTable(table, dir.File("absent/uplink.table"));
  ASSERT_FALSE(no_dir.ok());
  EXPECT_EQ(no_dir.error().message, dir.File("absent/uplink.table") +
                                        ": cannot create a temporary file in " +
                                        dir.File("absent") + ": No such file or directory");

  // Renaming a file over a non-empty directory fails; the temp file must be cleaned up.
  std::filesystem::create_directory(dir.File("taken"));
  WriteFile(dir.File("taken/keep"), "x");
  const Status over_dir = SaveCodeTable(table, dir.File("taken"));
  ASSERT_FALSE(over_dir.ok());
  EXPECT_EQ(over_dir.error().message.rfind(dir.File("taken") + ": cannot replace: ", 0), 0u)
      << over_dir.error().message;
  size_t entries = 0;
  for ([[maybe_unused]] const auto& entry : std::filesystem::directory_iterator(dir.path())) {
    ++entries;
  }
  EXPECT_EQ(entries, 1u);  // only "taken"
}

}  // namespace
}  // namespace codedrift
