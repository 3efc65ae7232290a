// How fast the command-line tool's CSV reader (tools/cli/csv_table.hpp) loads
// a large data file: writes rows x 20 random doubles (shortest round-trip
// text, as a simulation code printing full precision would) to a temporary
// file, then times CsvTable::read (read + index) and numbers() of every
// column, best of 3, and checks that every number comes back exactly.
//
//   csv_load_timing [rows, default 1000000] [file, default a temporary file]
//
// The file is removed afterwards unless it was named on the command line.
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <random>
#include <string>
#include <vector>

#include <fmt/format.h>

#include <csv_table.hpp>

using wavestack::Index;
using wavestack::Matrix;
using wavestack::cli::CsvTable;

namespace {

constexpr Index columnCount = 20;
constexpr std::uint64_t seed = 20240611;

/// The value of every cell, in row order; the same stream for writing and checking.
class Values {
public:
    double next()
    {
        // Magnitudes from 1e-6 to 1e6 and both signs, like mixed physical columns.
        return m_unit(m_engine) * std::pow(10.0, double(m_exponent(m_engine)));
    }

private:
    std::mt19937_64 m_engine{seed};
    std::uniform_real_distribution<double> m_unit{-1.0, 1.0};
    std::uniform_int_distribution<int> m_exponent{-6, 6};
};

void writeFile(const std::string& path, Index rows)
{
    std::FILE* file = std::fopen(path.c_str(), "wb");
    if (!file) {
        std::perror(path.c_str());
        std::exit(1);
    }
    fmt::memory_buffer buffer;
    for (Index c = 0; c < columnCount; ++c)
        fmt::format_to(std::back_inserter(buffer), "{}x{}", c ? "," : "", c + 1);
    buffer.push_back('\n');
    Values values;
    for (Index r = 0; r < rows; ++r) {
        for (Index c = 0; c < columnCount; ++c)
            fmt::format_to(std::back_inserter(buffer), "{}{}", c ? "," : "", values.next());
        buffer.push_back('\n');
        if (buffer.size() > (1 << 20) || r + 1 == rows) {
            if (std::fwrite(buffer.data(), 1, buffer.size(), file) != buffer.size()) {
                std::perror(path.c_str());
                std::exit(1);
            }
            buffer.clear();
        }
    }
    std::fclose(file);
}

double secondsSince(std::chrono::steady_clock::time_point start)
{
    return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

}  // namespace

int main(int argc, char** argv)
{
    const Index rows = argc > 1 ? Index(std::atoll(argv[1])) : 1000000;
    const bool keep = argc > 2;
    const std::string path = keep
        ? argv[2]
        : (std::filesystem::temp_directory_path() / "wavestack_csv_load_timing.csv").string();

    auto start = std::chrono::steady_clock::now();
    writeFile(path, rows);
    const double writeSeconds = secondsSince(start);
    const double megabytes = double(std::filesystem::file_size(path)) / 1e6;
    fmt::print("file: {} ({} rows x {} columns, {:.1f} MB, written in {:.2f} s)\n", path, rows,
               columnCount, megabytes, writeSeconds);

    std::vector<Index> columns(columnCount);
    for (Index c = 0; c < columnCount; ++c)
        columns[std::size_t(c)] = c;
    double bestRead = 1e300, bestNumbers = 1e300, bestTotal = 1e300;
    Matrix values;
    for (int repeat = 0; repeat < 3; ++repeat) {
        start = std::chrono::steady_clock::now();
        const CsvTable table = CsvTable::read(path);
        const double read = secondsSince(start);
        start = std::chrono::steady_clock::now();
        values = table.numbers(columns);
        const double numbers = secondsSince(start);
        fmt::print("  run {}: read + index {:.3f} s, numbers() {:.3f} s\n", repeat + 1, read,
                   numbers);
        bestRead = std::min(bestRead, read);
        bestNumbers = std::min(bestNumbers, numbers);
        bestTotal = std::min(bestTotal, read + numbers);
    }

    // Every number must come back exactly (shortest round-trip text).
    Values expected;
    Index wrong = 0;
    for (Index r = 0; r < rows; ++r)
        for (Index c = 0; c < columnCount; ++c)
            wrong += values(r, c) != expected.next();
    if (!keep)
        std::filesystem::remove(path);

    fmt::print(
        "best of 3: read + index {:.3f} s, numbers() {:.3f} s, total {:.3f} s, {:.0f} MB/s\n",
        bestRead, bestNumbers, bestTotal, megabytes / bestTotal);
    if (wrong > 0) {
        fmt::print(stderr, "{} numbers did not round-trip exactly\n", wrong);
        return 1;
    }
    fmt::print("all {} numbers round-trip exactly\n", rows * columnCount);
    return 0;
}
