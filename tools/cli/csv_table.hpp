#pragma once
/// \file
/// Reading CSV files of sampled runs: a header row of column names, then one
/// row per sample. Comma separated, fields optionally in double quotes (""
/// for a quote inside), '.' as decimal point, '#' lines and blank lines
/// ignored, LF or CRLF line ends, an optional UTF-8 byte order mark.
///
/// The file is read once into memory and indexed by record; cells are only
/// converted when a command asks for a column, so a command pays for the
/// columns it uses. Every error is one line naming the file, the line, the
/// column (number and header name) and what is wrong.

#include <algorithm>
#include <cerrno>
#include <charconv>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <filesystem>
#include <fstream>
#include <functional>
#include <string>
#include <string_view>
#include <system_error>
#include <unordered_map>
#include <utility>
#include <vector>

#include <fmt/format.h>

#include "input_error.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack::cli {

class CsvTable {
public:
    /// Reads and indexes `path`. Throws InputError (empty file, no data rows,
    /// ragged row, duplicate or empty column name, unterminated quote).
    static CsvTable read(const std::string& path)
    {
        std::ifstream in(path, std::ios::binary);
        if (!in)
            throw InputError(fmt::format("{}: cannot open the file: {}", path, std::strerror(errno)));
        std::error_code error;
        if (std::filesystem::is_directory(path, error))
            throw InputError(fmt::format("{}: cannot read the file: it is a directory", path));
        // A regular file is read in one go; a pipe (e.g. the shell's <(...))
        // has no size and is read in chunks up to its end.
        std::string text;
        const std::uintmax_t size = std::filesystem::file_size(path, error);
        if (!error && size > 0) {
            text.resize(std::size_t(size));
            in.read(text.data(), std::streamsize(size));
            text.resize(std::size_t(in.gcount()));
        }
        char chunk[1 << 16];
        while (!in.bad() && in.read(chunk, sizeof chunk).gcount() > 0)
            text.append(chunk, std::size_t(in.gcount()));
        if (in.bad())
            throw InputError(fmt::format("{}: reading the file failed", path));
        return fromText(std::move(text), path);
    }

    /// Parses text already in memory; `path` names it in messages.
    static CsvTable fromText(std::string text, std::string path)
    {
        CsvTable table;
        table.m_text = std::move(text);
        table.m_path = std::move(path);
        table.index();
        return table;
    }

    const std::string& path() const { return m_path; }
    const std::vector<std::string>& columns() const { return m_columns; }
    Index rows() const { return Index(m_records.size()); }

    /// Position of a column by header name; -1 when absent.
    Index find(std::string_view name) const
    {
        const auto it = m_lookup.find(std::string(name));
        return it == m_lookup.end() ? -1 : it->second;
    }

    /// Position of a column that must exist; `role` says why in the message.
    Index require(std::string_view name, std::string_view role) const
    {
        const Index column = find(name);
        if (column < 0) {
            std::string known;
            for (const auto& header : m_columns)
                known += (known.empty() ? "" : ", ") + printable(header);
            throw InputError(fmt::format("{}: line {}: no column named \"{}\" ({}); the header has: {}", m_path,
                                         m_headerLine, printable(name), role, known));
        }
        return column;
    }

    /// Rows x columns.size() numbers from the given columns; every cell must
    /// hold a finite number.
    Matrix numbers(const std::vector<Index>& columns) const
    {
        Matrix values(rows(), Index(columns.size()));
        std::vector<std::string_view> cells;
        for (Index r = 0; r < rows(); ++r) {
            split(r, cells);
            for (std::size_t j = 0; j < columns.size(); ++j)
                values(r, Index(j)) = number(cells[std::size_t(columns[j])], r, columns[j]);
        }
        return values;
    }

    /// The raw text of each field of row `r` (quotes included), for copying
    /// a row to an output file unchanged. `cells` is reused to avoid allocation.
    void split(Index r, std::vector<std::string_view>& cells) const
    {
        cells.clear();
        const Record& record = m_records[std::size_t(r)];
        const char* at = m_text.data() + record.offset;
        const char* const end = m_text.data() + record.end;
        if (!record.quoted) {
            // Without quotes every comma ends a field; memchr finds them fast.
            while (const void* comma = std::memchr(at, ',', std::size_t(end - at))) {
                cells.emplace_back(at, std::size_t(static_cast<const char*>(comma) - at));
                at = static_cast<const char*>(comma) + 1;
            }
            cells.emplace_back(at, std::size_t(end - at));
        } else {
            for (;;) {
                const char* const fieldEnd = quotedFieldEnd(at, end);
                cells.emplace_back(at, std::size_t(fieldEnd - at));
                if (fieldEnd == end)
                    break;
                at = fieldEnd + 1;
            }
        }
        if (!cells.back().empty() && cells.back().back() == '\r')
            cells.back().remove_suffix(1);  // CRLF line end
    }

    /// The file line where row `r` (0-based data row) starts, for messages.
    std::size_t line(Index r) const { return m_records[std::size_t(r)].line; }

    /// The number in a raw field; throws naming the place when it is not one.
    double number(std::string_view field, Index r, Index column) const
    {
        const std::string_view cell = unquoted(trimmed(field));
        if (cell.empty())
            fail(field, r, column, "empty cell, a number is needed");
        // from_chars rejects an explicit plus sign; a second sign ("+-1") stays an error.
        std::string_view digits = cell;
        if (digits.size() > 1 && digits[0] == '+' && digits[1] != '-' && digits[1] != '+')
            digits.remove_prefix(1);
        double value = 0.0;
        const auto [end, status] = std::from_chars(digits.data(), digits.data() + digits.size(), value);
        if (status == std::errc::result_out_of_range)
            fail(field, r, column, fmt::format("\"{}\" is out of the range of double precision", printable(cell)));
        if (status != std::errc() || end != digits.data() + digits.size())
            fail(field, r, column,
                 fmt::format("\"{}\" is not a number{}", printable(cell),
                             cell.find(',') != std::string_view::npos ? " (use '.' as decimal point)" : ""));
        if (!std::isfinite(value))
            fail(field, r, column,
                 fmt::format("\"{}\" is not a finite number (NaN and infinity cannot be fitted)", printable(cell)));
        return value;
    }

private:
    struct Record {
        std::size_t offset;  // byte where the record starts
        std::size_t end;     // its line end (or the end of the text)
        std::size_t line;    // 1-based file line where it starts
        bool quoted;         // holds a '"': commas and line ends may be inside fields
    };

    /// Throws naming the line where `field` of row `r` starts: later than the
    /// row's first line when a quoted line end comes before the field.
    [[noreturn]] void fail(std::string_view field, Index r, Index column, const std::string& what) const
    {
        std::size_t where = line(r);
        const char* const rowStart = m_text.data() + m_records[std::size_t(r)].offset;
        const std::less_equal<const char*> notAfter;  // total order, also for pointers elsewhere
        if (notAfter(rowStart, field.data()) && notAfter(field.data(), m_text.data() + m_text.size()))
            where += std::size_t(std::count(rowStart, field.data(), '\n'));
        throw InputError(fmt::format("{}: line {}, column {} (\"{}\"): {}", m_path, where, column + 1,
                                     printable(m_columns[std::size_t(column)]), what));
    }

    /// `text` fit for a one-line message: line ends and other control
    /// characters escaped, long text cut (a stray quote can make one field of
    /// many lines).
    static std::string printable(std::string_view text)
    {
        constexpr std::size_t longest = 60;
        std::size_t shown = std::min(text.size(), longest);
        while (shown > 0 && shown < text.size() && (static_cast<unsigned char>(text[shown]) & 0xC0) == 0x80)
            --shown;  // do not cut a UTF-8 character in two
        std::string result;
        for (const char c : text.substr(0, shown)) {
            if (c == '\n')
                result += "\\n";
            else if (c == '\r')
                result += "\\r";
            else if (static_cast<unsigned char>(c) < 0x20 && c != '\t')
                result += fmt::format("\\x{:02x}", int(c));
            else
                result += c;
        }
        if (shown < text.size())
            result += "...";
        return result;
    }

    static std::string_view trimmed(std::string_view s)
    {
        while (!s.empty() && (s.front() == ' ' || s.front() == '\t'))
            s.remove_prefix(1);
        while (!s.empty() && (s.back() == ' ' || s.back() == '\t' || s.back() == '\r'))
            s.remove_suffix(1);
        return s;
    }

    static std::string_view unquoted(std::string_view s)
    {
        if (s.size() >= 2 && s.front() == '"' && s.back() == '"')
            return trimmed(s.substr(1, s.size() - 2));
        return s;
    }

    /// Where the field starting at `at` ends: at a comma or the record's end.
    /// Commas and line ends inside quotes belong to the field.
    static const char* quotedFieldEnd(const char* at, const char* recordEnd)
    {
        bool quoted = false;
        for (; at < recordEnd; ++at) {
            if (*at == '"')
                quoted = !quoted;  // "" inside quotes toggles twice: stays quoted
            else if (!quoted && *at == ',')
                return at;
        }
        return recordEnd;
    }

    /// The first line end at or after `at`, or the end of the text.
    std::size_t lineEnd(std::size_t at) const
    {
        const void* newline = std::memchr(m_text.data() + at, '\n', m_text.size() - at);
        return newline ? std::size_t(static_cast<const char*>(newline) - m_text.data()) : m_text.size();
    }

    /// Splits the text into records, checks the header and that every row
    /// has as many fields as the header.
    void index()
    {
        std::size_t at = 0, line = 1;
        if (m_text.compare(0, 3, "\xEF\xBB\xBF") == 0)
            at = 3;  // UTF-8 byte order mark, written by some spreadsheet programs
        std::vector<std::string_view> cells;
        bool haveHeader = false;
        while (at < m_text.size()) {
            // Skip blank and comment lines.
            std::size_t first = at;
            while (first < m_text.size() && (m_text[first] == ' ' || m_text[first] == '\t' || m_text[first] == '\r'))
                ++first;
            if (first >= m_text.size())
                break;
            if (m_text[first] == '\n' || m_text[first] == '#') {
                at = lineEnd(first) + 1;
                ++line;
                continue;
            }
            // One record: fields up to an unquoted line end. Most records hold
            // no quote: then the record is the line, with one field per comma + 1.
            Record record{at, lineEnd(at), line, false};
            std::size_t fields = 0;
            if (!std::memchr(m_text.data() + at, '"', record.end - at)) {
                fields = 1 + std::size_t(std::count(m_text.data() + at, m_text.data() + record.end, ','));
            } else {
                record.quoted = true;
                fields = 1;
                bool quoted = false;
                std::size_t end = at;
                for (; end < m_text.size(); ++end) {
                    const char c = m_text[end];
                    if (c == '"')
                        quoted = !quoted;
                    else if (c == '\n' && !quoted)
                        break;
                    else if (c == '\n')
                        ++line;
                    else if (c == ',' && !quoted)
                        ++fields;
                }
                if (quoted)
                    throw InputError(fmt::format("{}: line {}: a quoted field is not closed before the end of the file",
                                                 m_path, record.line));
                record.end = end;
            }
            at = record.end + 1;  // past the line end
            ++line;
            if (!haveHeader) {
                haveHeader = true;
                m_headerLine = record.line;
                m_records.push_back(record);
                split(0, cells);
                m_records.clear();
                readHeader(cells);
                continue;
            }
            if (fields != m_columns.size())
                throw InputError(fmt::format("{}: line {}: {} fields, but the header (line {}) has {} columns{}",
                                             m_path, record.line, fields, m_headerLine, m_columns.size(),
                                             fields > m_columns.size() ? " (a decimal comma? use '.')" : ""));
            m_records.push_back(record);
        }
        if (!haveHeader)
            throw InputError(fmt::format("{}: the file is empty: a header row of column names is needed", m_path));
        if (m_records.empty())
            throw InputError(fmt::format("{}: line {}: a header row but no data rows", m_path, m_headerLine));
    }

    void readHeader(const std::vector<std::string_view>& cells)
    {
        for (std::size_t j = 0; j < cells.size(); ++j) {
            std::string name;
            const std::string_view raw = trimmed(cells[j]);
            const std::string_view inner = unquoted(raw);
            for (std::size_t i = 0; i < inner.size(); ++i) {
                name += inner[i];
                if (inner.size() != raw.size() && inner[i] == '"' && i + 1 < inner.size() && inner[i + 1] == '"')
                    ++i;  // "" inside quotes is one quote
            }
            if (name.empty())
                throw InputError(fmt::format("{}: line {}, column {}: the header cell is empty; every column needs "
                                             "a name",
                                             m_path, m_headerLine, j + 1));
            if (!m_lookup.emplace(name, Index(j)).second)
                throw InputError(fmt::format("{}: line {}, column {}: the column name \"{}\" appears twice", m_path,
                                             m_headerLine, j + 1, printable(name)));
            m_columns.push_back(std::move(name));
        }
    }

    std::string m_text, m_path;
    std::vector<std::string> m_columns;
    std::unordered_map<std::string, Index> m_lookup;
    std::vector<Record> m_records;
    std::size_t m_headerLine = 0;
};

}  // namespace wavestack::cli
