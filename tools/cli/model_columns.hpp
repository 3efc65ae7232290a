#pragma once
/// \file
/// Reading a model file for a command; names of its inputs and outputs, and
/// finding them in a CSV file by header name (any column order; other
/// columns are left alone).

#include <cerrno>
#include <cstring>
#include <fstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "csv_table.hpp"
#include "wavestack/io/model_file.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack::cli {

/// Loads a model file; a file that cannot be opened is the user's to fix
/// (InputError), a damaged one a ModelFileError naming the byte offset.
inline Network readModel(const std::string& path)
{
    if (!std::ifstream(path, std::ios::binary))
        throw InputError(fmt::format("{}: cannot open the model file: {}", path, std::strerror(errno)));
    return loadModel(path);
}

/// The stored names, or x0, x1, ... / y0, y1, ... when the model has none.
inline std::vector<std::string> inputNames(const Network& network)
{
    std::vector<std::string> names = network.record().inputNames;
    if (names.empty())
        for (Index j = 0; j < network.inputCount(); ++j)
            names.push_back(fmt::format("x{}", j));
    return names;
}

inline std::vector<std::string> outputNames(const Network& network)
{
    std::vector<std::string> names = network.record().outputNames;
    if (names.empty())
        for (Index j = 0; j < network.outputCount(); ++j)
            names.push_back(fmt::format("y{}", j));
    return names;
}

/// Positions of `names` in the table; a missing one is an InputError naming
/// it and `role` ("model input", "model output").
inline std::vector<Index> findColumns(const CsvTable& table, const std::vector<std::string>& names,
                                      const char* role)
{
    std::vector<Index> columns;
    for (const auto& name : names)
        columns.push_back(table.require(name, role));
    return columns;
}

}  // namespace wavestack::cli
