// Unit tests of the command-line tool's CSV reader (tools/cli/csv_table.hpp):
// every documented feature, and every error's message (file, line, column).

#include "doctest/doctest.h"

#include <csv_table.hpp>

#include <cmath>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <string>
#include <string_view>
#include <thread>
#include <vector>

#if defined(__unix__) || defined(__APPLE__)
#include <sys/stat.h>  // mkfifo
#endif

using wavestack::Index;
using wavestack::Matrix;
using wavestack::cli::CsvTable;
using wavestack::cli::InputError;

namespace {

CsvTable load(std::string text)
{
    return CsvTable::fromText(std::move(text), "name.csv");
}

/// The message of the InputError `action` throws; fails the test when it throws none.
template <class Action> std::string errorOf(Action&& action)
{
    try {
        action();
    } catch (const InputError& error) {
        const std::string message = error.what();
        CHECK_MESSAGE(message.find('\n') == std::string::npos, "not one line: " << message);
        CHECK_MESSAGE(message.find('\r') == std::string::npos, "not one line: " << message);
        return message;
    }
    FAIL("no InputError was thrown");
    return {};
}

std::string loadError(std::string text)
{
    return errorOf([&] { (void)load(std::move(text)); });
}

std::vector<Index> allColumns(const CsvTable& table)
{
    std::vector<Index> columns;
    for (Index c = 0; c < Index(table.columns().size()); ++c)
        columns.push_back(c);
    return columns;
}

Matrix allNumbers(const CsvTable& table)
{
    return table.numbers(allColumns(table));
}

/// The error converting every column of `text` to numbers.
std::string numbersError(std::string text)
{
    const CsvTable table = load(std::move(text));
    return errorOf([&] { (void)allNumbers(table); });
}

std::vector<std::string> rawFields(const CsvTable& table, Index r)
{
    std::vector<std::string_view> cells;
    table.split(r, cells);
    return {cells.begin(), cells.end()};
}

bool contains(const std::string& text, std::string_view part)
{
    return text.find(part) != std::string::npos;
}

}  // namespace

TEST_CASE("a header row and rows of numbers")
{
    const CsvTable table = load("x,y,z\n1,2,3\n4,5,6\n");
    CHECK(table.path() == "name.csv");
    CHECK(table.columns() == std::vector<std::string>{"x", "y", "z"});
    CHECK(table.rows() == 2);
    CHECK(table.find("y") == 1);
    CHECK(table.find("w") == -1);
    CHECK(table.require("z", "--target") == 2);
    CHECK(table.line(0) == 2);
    CHECK(table.line(1) == 3);
    const Matrix all = allNumbers(table);
    REQUIRE(all.rows() == 2);
    REQUIRE(all.cols() == 3);
    CHECK(all(0, 0) == 1.0);
    CHECK(all(1, 2) == 6.0);
    // A subset, in the order asked for, repeats allowed.
    const Matrix some = table.numbers({2, 0, 2});
    REQUIRE(some.cols() == 3);
    CHECK(some(1, 0) == 6.0);
    CHECK(some(1, 1) == 4.0);
    CHECK(some(1, 2) == 6.0);
}

TEST_CASE("the last line may lack its line end")
{
    const CsvTable table = load("x,y\n1,2\n3,4");
    CHECK(table.rows() == 2);
    CHECK(allNumbers(table)(1, 1) == 4.0);
    CHECK(rawFields(table, 1) == std::vector<std::string>{"3", "4"});
}

TEST_CASE("numbers parse exactly")
{
    const CsvTable table = load("value\n"
                                "0.1\n"
                                "1e-300\n"
                                "-2.5E+3\n"
                                "+4\n"
                                " 7 \n"
                                "\"3.5\"\n"
                                "\" 8 \"\n"
                                "\t9\t\n"
                                ".5\n"
                                "5.\n"
                                "-0\n"
                                "1.7976931348623157e308\n"
                                "4.9406564584124654e-324\n"
                                "0.30000000000000004\n"
                                "+1.5e-3\n");
    const Matrix v = allNumbers(table);
    REQUIRE(v.rows() == 15);
    CHECK(v(0) == 0.1);
    CHECK(v(1) == 1e-300);
    CHECK(v(2) == -2500.0);
    CHECK(v(3) == 4.0);
    CHECK(v(4) == 7.0);
    CHECK(v(5) == 3.5);
    CHECK(v(6) == 8.0);
    CHECK(v(7) == 9.0);
    CHECK(v(8) == 0.5);
    CHECK(v(9) == 5.0);
    CHECK(v(10) == 0.0);
    CHECK(std::signbit(v(10)));
    CHECK(v(11) == 1.7976931348623157e308);
    CHECK(v(12) == 4.9406564584124654e-324);
    CHECK(v(13) == 0.30000000000000004);
    CHECK(v(13) != 0.3);
    CHECK(v(14) == 1.5e-3);
}

TEST_CASE("cells are converted only for the columns asked for")
{
    const CsvTable table = load("label,x\nrun a,1\nrun b,2\n");
    const Matrix x = table.numbers({1});
    CHECK(x(0, 0) == 1.0);
    CHECK(x(1, 0) == 2.0);
    const std::string message = errorOf([&] { (void)table.numbers({0, 1}); });
    CHECK(contains(message, "name.csv: line 2, column 1 (\"label\")"));
    CHECK(contains(message, "\"run a\" is not a number"));
}

TEST_CASE("split returns the raw fields")
{
    SUBCASE("quotes and blanks are kept")
    {
        const CsvTable table = load("a,b,c\n\"1\", 2 ,\"x,\"\"y\"\"\"\n");
        CHECK(rawFields(table, 0) == std::vector<std::string>{"\"1\"", " 2 ", "\"x,\"\"y\"\"\""});
    }
    SUBCASE("the CR of a CRLF line end is dropped, a CR inside quotes is kept")
    {
        const CsvTable table = load("a,b\r\n1,2\r\n\"3\r\n\",\"4\"\r\n");
        CHECK(rawFields(table, 0) == std::vector<std::string>{"1", "2"});
        CHECK(rawFields(table, 1) == std::vector<std::string>{"\"3\r\n\"", "\"4\""});
    }
    SUBCASE("empty fields")
    {
        const CsvTable table = load("a,b,c\n,,\n");
        CHECK(rawFields(table, 0) == std::vector<std::string>{"", "", ""});
    }
    SUBCASE("the vector is reused")
    {
        const CsvTable table = load("a,b\n1,2\n3,4\n");
        std::vector<std::string_view> cells;
        table.split(0, cells);
        table.split(1, cells);
        CHECK(cells == std::vector<std::string_view>{"3", "4"});
    }
}

TEST_CASE("quoted fields hold commas, doubled quotes and line ends")
{
    const CsvTable table = load("\"a,b\",\"say \"\"hi\"\"\",\"two\nlines\"\n"
                                "1,\"2\",\"3\"\n"
                                "\"multi\nline\",5,6\n"
                                "7,8,9\n");
    CHECK(table.columns() == std::vector<std::string>{"a,b", "say \"hi\"", "two\nlines"});
    CHECK(table.find("a,b") == 0);
    CHECK(table.find("say \"hi\"") == 1);
    CHECK(table.rows() == 3);
    // The header spans lines 1-2, so the rows start on lines 3, 4 and 6.
    CHECK(table.line(0) == 3);
    CHECK(table.line(1) == 4);
    CHECK(table.line(2) == 6);
    CHECK(rawFields(table, 1) == std::vector<std::string>{"\"multi\nline\"", "5", "6"});
    const Matrix numbers = table.numbers({1, 2});
    CHECK(numbers(0, 0) == 2.0);
    CHECK(numbers(2, 1) == 9.0);
}

TEST_CASE("blanks around header names and quoted header names")
{
    const CsvTable table = load(" x , \"y z\" ,\tw\t\n1,2,3\n");
    CHECK(table.columns() == std::vector<std::string>{"x", "y z", "w"});
}

TEST_CASE("CRLF line ends")
{
    const CsvTable table = load("x,y\r\n# note\r\n\r\n1.5,2\r\n3,4.25\r\n");
    CHECK(table.columns() == std::vector<std::string>{"x", "y"});
    CHECK(table.rows() == 2);
    CHECK(table.line(0) == 4);
    CHECK(table.line(1) == 5);
    const Matrix v = allNumbers(table);
    CHECK(v(0, 0) == 1.5);
    CHECK(v(1, 1) == 4.25);
    const std::string message = numbersError("x,y\r\n1,2\r\n3,oops\r\n");
    CHECK(contains(message, "name.csv: line 3, column 2 (\"y\"): \"oops\" is not a number"));
}

TEST_CASE("a UTF-8 byte order mark is skipped")
{
    const CsvTable table = load("\xEF\xBB\xBFx,y\n1,2\n");
    CHECK(table.columns() == std::vector<std::string>{"x", "y"});
    CHECK(table.find("x") == 0);
    CHECK(table.line(0) == 2);
    CHECK(allNumbers(table)(0, 0) == 1.0);
    // ... also before a comment line.
    CHECK(load("\xEF\xBB\xBF# made by a spreadsheet\nx\n1\n").columns() ==
          std::vector<std::string>{"x"});
}

TEST_CASE("comment and blank lines are skipped but counted")
{
    const CsvTable table = load("# written by the solver\n"   // 1
                                "\n"                          // 2
                                "x,y\n"                       // 3
                                "   # an indented comment\n"  // 4
                                "\t\n"                        // 5
                                "1,2\n"                       // 6
                                "   \n"                       // 7
                                "#3,4\n"                      // 8
                                "5,6\n"                       // 9
                                "\n"                          // 10
                                "# the end");                 // 11
    CHECK(table.columns() == std::vector<std::string>{"x", "y"});
    CHECK(table.rows() == 2);
    CHECK(table.line(0) == 6);
    CHECK(table.line(1) == 9);
    const Matrix v = allNumbers(table);
    CHECK(v(1, 0) == 5.0);
    // A '#' or blank line inside quotes belongs to the field.
    const CsvTable quoted = load("x,note\n1,\"a\n# not a comment\n\nb\"\n2,c\n");
    CHECK(quoted.rows() == 2);
    CHECK(quoted.line(1) == 6);
    CHECK(rawFields(quoted, 0)[1] == "\"a\n# not a comment\n\nb\"");
}

TEST_CASE("read() loads a file from disk")
{
    const auto path =
        (std::filesystem::temp_directory_path() / "wavestack_csv_table_test.csv").string();
    {
        std::ofstream out(path, std::ios::binary);
        out << "x,y\r\n0.1,-2.5E+3\r\n";
    }
    const CsvTable table = CsvTable::read(path);
    CHECK(table.path() == path);
    CHECK(allNumbers(table)(0, 0) == 0.1);
    CHECK(allNumbers(table)(0, 1) == -2500.0);
    {
        std::ofstream out(path, std::ios::binary | std::ios::trunc);
    }
    const std::string empty = errorOf([&] { (void)CsvTable::read(path); });
    CHECK(contains(empty, path + ": the file is empty"));
    std::remove(path.c_str());
    const std::string missing = errorOf([&] { (void)CsvTable::read(path); });
    CHECK(contains(missing, path + ": cannot open the file"));
}

TEST_CASE("read() names a directory as such")
{
    const auto path = std::filesystem::temp_directory_path().string();
    CHECK(contains(errorOf([&] { (void)CsvTable::read(path); }),
                   path + ": cannot read the file: it is a directory"));
}

#if defined(__unix__) || defined(__APPLE__)
TEST_CASE("read() reads a pipe to its end")
{
    // As the shell's <(command) hands the tool a pipe: it has no size.
    const auto path =
        (std::filesystem::temp_directory_path() / "wavestack_csv_table_test.fifo").string();
    std::remove(path.c_str());
    REQUIRE(::mkfifo(path.c_str(), 0600) == 0);
    std::string text = "x,y\n";
    for (int i = 0; i < 20000; ++i)  // more than the 64 KiB a pipe buffers
        text += std::to_string(i) + "," + std::to_string(2 * i) + "\n";
    std::thread writer([&] { std::ofstream(path, std::ios::binary) << text; });
    const CsvTable table = CsvTable::read(path);
    writer.join();
    std::remove(path.c_str());
    CHECK(table.rows() == 20000);
    CHECK(table.numbers({1})(19999, 0) == 39998.0);
}
#endif

TEST_CASE("error: empty file")
{
    for (const char* text :
         {"", "\n\n", "# only a comment\n\n  # and another\n", "\xEF\xBB\xBF", "  \r\n\t\r\n"}) {
        CAPTURE(text);
        CHECK(contains(loadError(text),
                       "name.csv: the file is empty: a header row of column names is needed"));
    }
}

TEST_CASE("error: a header but no data rows")
{
    CHECK(contains(loadError("x,y\n"), "name.csv: line 1: a header row but no data rows"));
    CHECK(contains(loadError("x,y"), "name.csv: line 1: a header row but no data rows"));
    CHECK(contains(loadError("# c\n\nx,y\n# c\n\n"),
                   "name.csv: line 3: a header row but no data rows"));
}

TEST_CASE("error: ragged row")
{
    SUBCASE("too few fields")
    {
        const std::string message = loadError("x,y,z\n1,2,3\n4,5\n");
        CHECK(
            contains(message, "name.csv: line 3: 2 fields, but the header (line 1) has 3 columns"));
        CHECK_FALSE(contains(message, "decimal comma"));
    }
    SUBCASE("too many fields")
    {
        CHECK(contains(loadError("x,y\n1,2,3\n"),
                       "name.csv: line 2: 3 fields, but the header (line 1) has 2 columns"));
    }
    SUBCASE("a trailing comma is one more field")
    {
        CHECK(contains(loadError("x,y\n1,2,\n"), "line 2: 3 fields"));
    }
    SUBCASE("line numbers after comments, blank lines and quoted line ends")
    {
        const std::string message = loadError("# c\n"            // 1
                                              "x,\"y\ny\"\n"     // 2-3
                                              "\n"               // 4
                                              "1,\"a\nb\nc\"\n"  // 5-7
                                              "# c\n"            // 8
                                              "2,3,4\n");        // 9
        CHECK(
            contains(message, "name.csv: line 9: 3 fields, but the header (line 2) has 2 columns"));
    }
    SUBCASE("a ragged row that is itself multi-line is named by its first line")
    {
        CHECK(contains(loadError("x,y\n1,2\n\"3\n\"\n"), "name.csv: line 3: 1 fields"));
    }
}

TEST_CASE("a decimal comma gives a ragged-row error with a hint")
{
    const std::string message = loadError("x,y\n1,5,2,5\n");
    CHECK(contains(message, "name.csv: line 2: 4 fields, but the header (line 1) has 2 columns"));
    CHECK(contains(message, "(a decimal comma? use '.')"));
    // Quoted, a decimal comma keeps the field count but is not a number.
    const std::string quoted = numbersError("x,y\n\"1,5\",\"2,5\"\n");
    CHECK(contains(
        quoted,
        "name.csv: line 2, column 1 (\"x\"): \"1,5\" is not a number (use '.' as decimal point)"));
}

TEST_CASE("error: a cell that is not a number")
{
    CHECK(contains(numbersError("x,y\n1,2\n3,abc\n"),
                   "name.csv: line 3, column 2 (\"y\"): \"abc\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,2 3\n"),
                   "line 2, column 2 (\"y\"): \"2 3\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,0x10\n"), "\"0x10\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,1e\n"), "\"1e\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,1.2.3\n"), "\"1.2.3\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,--1\n"), "\"--1\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,++1\n"), "\"++1\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,+-1\n"), "\"+-1\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,+\n"), "\"+\" is not a number"));
    CHECK(contains(numbersError("x,y\n1,\"\"\"2\"\"\"\n"), "is not a number"));
    CHECK(contains(numbersError("x,y\n1,1e400\n"),
                   "line 2, column 2 (\"y\"): \"1e400\" is out of the range"));
    // Comments, blank lines and quoted line ends before it shift the line.
    const CsvTable table = load("x,note\n# c\n\n1,\"a\nb\"\nq,c\n");
    CHECK(contains(errorOf([&] { (void)table.numbers({0}); }),
                   "name.csv: line 6, column 1 (\"x\"): \"q\""));
}

TEST_CASE("a bad cell after a quoted line end in the same row is named by its own line")
{
    const CsvTable table = load("x,note,y\n1,\"two\nlines\",2\n3,\"a\n\nb\",oops\n");
    const std::string message = errorOf([&] { (void)table.numbers({0, 2}); });
    CHECK(contains(message, "name.csv: line 6, column 3 (\"y\"): \"oops\" is not a number"));
    CHECK(table.line(1) == 4);
    // A field of several lines is named by the line it starts on.
    CHECK(contains(errorOf([&] { (void)table.numbers({1}); }),
                   "name.csv: line 2, column 2 (\"note\")"));
}

TEST_CASE("error messages stay on one line whatever the cell or column name holds")
{
    // Line ends and other control characters are escaped.
    const std::string cell = numbersError("x,y\n1,\"multi\nline\r\ntext\x01\"\n");
    CHECK(contains(
        cell,
        "name.csv: line 2, column 2 (\"y\"): \"multi\\nline\\r\\ntext\\x01\" is not a number"));
    const std::string name = numbersError("x,\"two\nlines\"\n1,oops\n");
    CHECK(contains(name, "name.csv: line 3, column 2 (\"two\\nlines\"): \"oops\" is not a number"));
    const CsvTable table = load("x,\"two\nlines\"\n1,2\n");
    const std::string missing = errorOf([&] { (void)table.require("z", "--target"); });
    CHECK(contains(
        missing,
        "name.csv: line 1: no column named \"z\" (--target); the header has: x, two\\nlines"));
    const std::string duplicate = loadError("\"a\nb\",\"a\nb\"\n1,2\n");
    CHECK(
        contains(duplicate, "name.csv: line 1, column 2: the column name \"a\\nb\" appears twice"));
    // A long cell (a stray quote can swallow many lines) is cut short.
    std::string text = "x,y\n1,\"";
    for (int i = 0; i < 1000; ++i)
        text += "more text\n";
    const std::string cut = numbersError(text + "\"\n");
    CHECK(contains(cut, "name.csv: line 2, column 2 (\"y\"): \"more text\\nmore text"));
    CHECK(contains(cut, "...\" is not a number"));
    CHECK(cut.size() < 200);
    // ... but not inside a UTF-8 character: 59 ASCII bytes, then a 2-byte "é".
    const std::string utf8 = numbersError("x\n" + std::string(59, 'a') + "\xC3\xA9tc\n");
    CHECK(contains(utf8, "\"" + std::string(59, 'a') + "...\" is not a number"));
}

TEST_CASE("error: empty cell")
{
    CHECK(contains(numbersError("x,y,z\n1,2,3\n4,,6\n"),
                   "name.csv: line 3, column 2 (\"y\"): empty cell, a number is needed"));
    CHECK(contains(numbersError("x,y\n1,   \n"), "line 2, column 2 (\"y\"): empty cell"));
    CHECK(contains(numbersError("x,y\n,2\n"), "line 2, column 1 (\"x\"): empty cell"));
    CHECK(contains(numbersError("x,y\n1,\"\"\n"), "line 2, column 2 (\"y\"): empty cell"));
    CHECK(contains(numbersError("x,y\r\n1,\r\n"), "line 2, column 2 (\"y\"): empty cell"));
    CHECK(contains(numbersError("x,y\n1,\" \"\n"), "line 2, column 2 (\"y\"): empty cell"));
}

TEST_CASE("error: NaN or infinity")
{
    for (const char* cell :
         {"nan", "NaN", "-nan", "nan(1)", "inf", "-inf", "Infinity", "+inf", "\"NaN\""}) {
        CAPTURE(cell);
        const std::string message = numbersError(std::string("x,y\n1,2\n3,") + cell + "\n");
        CHECK(contains(message, "name.csv: line 3, column 2 (\"y\"): "));
        CHECK(contains(message, "is not a finite number (NaN and infinity cannot be fitted)"));
    }
}

TEST_CASE("error: duplicate column name")
{
    CHECK(contains(loadError("x,y,x\n1,2,3\n"),
                   "name.csv: line 1, column 3: the column name \"x\" appears twice"));
    // Blanks and quotes do not make names different.
    CHECK(contains(loadError("# c\nx,y, \"y\" \n1,2,3\n"),
                   "name.csv: line 2, column 3: the column name \"y\" appears twice"));
}

TEST_CASE("error: empty header cell")
{
    CHECK(contains(
        loadError("x,,z\n1,2,3\n"),
        "name.csv: line 1, column 2: the header cell is empty; every column needs a name"));
    CHECK(contains(loadError("\n# c\nx,y,\n1,2,3\n"),
                   "name.csv: line 3, column 3: the header cell is empty"));
    CHECK(contains(loadError("x,\"\"\n1,2\n"), "line 1, column 2: the header cell is empty"));
    CHECK(contains(loadError("x,  \r\n1,2\r\n"), "line 1, column 2: the header cell is empty"));
}

TEST_CASE("error: unterminated quote")
{
    CHECK(contains(loadError("x,y\n1,2\n3,\"4\n5,6\n"),
                   "name.csv: line 3: a quoted field is not closed before the end of the file"));
    CHECK(contains(loadError("x,\"y\n1,2\n"), "name.csv: line 1: a quoted field is not closed"));
    CHECK(contains(loadError("x,y\n\"1\n\",2\n# c\n3,\"\"\"4\n"),
                   "name.csv: line 5: a quoted field is not closed"));
}

TEST_CASE("error: missing column")
{
    const CsvTable table = load("# c\nx, y ,z\n1,2,3\n");
    const std::string message = errorOf([&] { (void)table.require("w", "--target"); });
    CHECK(contains(message,
                   "name.csv: line 2: no column named \"w\" (--target); the header has: x, y, z"));
    CHECK(contains(errorOf([&] { (void)table.require("X", "model input"); }),
                   "no column named \"X\" (model input)"));
}
