// `wavestack predict`: a model and a CSV of inputs in, the same rows plus
// predictions (and optionally gradients and a domain flag) out.

#include <algorithm>
#include <cstdio>

#include <fmt/format.h>

#include "commands.hpp"
#include "csv_table.hpp"
#include "input_error.hpp"
#include "interrupt.hpp"
#include "model_columns.hpp"
#include "output_file.hpp"
#include "wavestack/io/model_file.hpp"

namespace wavestack::cli {
namespace {

/// A new column's name; "_predicted" is appended while it would clash with
/// a column of the input file (e.g. the true values of the output).
std::string freshName(const CsvTable& table, std::string name)
{
    while (table.find(name) >= 0)
        name += "_predicted";
    return name;
}

/// A header cell, quoted when the name needs it.
std::string csvCell(const std::string& text)
{
    if (text.find_first_of(",\"\n\r") == std::string::npos)
        return text;
    std::string quoted = "\"";
    for (char c : text)
        quoted += c == '"' ? std::string("\"\"") : std::string(1, c);
    return quoted + "\"";
}

}  // namespace

int runPredict(const PredictCommand& command)
{
    const Network network = readModel(command.model);
    const CsvTable table = CsvTable::read(command.data);
    const std::vector<std::string> inputs = inputNames(network), outputs = outputNames(network);
    const Matrix x = table.numbers(findColumns(table, inputs, "model input"));
    const Matrix y = network.evaluateBatch(x);
    const Index d = network.inputCount(), m = network.outputCount();

    std::vector<std::string> header = table.columns();
    for (const auto& name : outputs)
        header.push_back(freshName(table, name));
    if (command.gradient)
        for (const auto& out : outputs)
            for (const auto& in : inputs)
                header.push_back(freshName(table, fmt::format("d({})/d({})", out, in)));
    if (command.flagOutside)
        header.push_back(freshName(table, "outside_domain"));
    if (command.flagOutside && network.domain().empty())
        throw InputError(fmt::format("{}: --flag-outside: the model stores no training domain", command.model));

    OutputFile out(command.output);
    fmt::memory_buffer buffer;
    for (std::size_t c = 0; c < header.size(); ++c)
        fmt::format_to(std::back_inserter(buffer), "{}{}", c ? "," : "", csvCell(header[c]));
    buffer.push_back('\n');

    std::vector<std::string_view> cells;
    Vector value(m), point(d);
    Matrix jacobian(d, m);  // column-major d x m holds the row-major m x d Jacobian
    Index outside = 0;
    for (Index r = 0; r < table.rows(); ++r) {
        table.split(r, cells);
        for (std::size_t c = 0; c < cells.size(); ++c)
            fmt::format_to(std::back_inserter(buffer), "{}{}", c ? "," : "", cells[c]);
        for (Index o = 0; o < m; ++o)
            fmt::format_to(std::back_inserter(buffer), ",{}", y(r, o));
        if (command.gradient) {
            point = x.row(r).transpose();
            network.evaluateWithJacobian(point.data(), value.data(), jacobian.data());
            for (Index o = 0; o < m; ++o)
                for (Index j = 0; j < d; ++j)
                    fmt::format_to(std::back_inserter(buffer), ",{}", jacobian(j, o));
        }
        if (command.flagOutside) {
            const bool flag = network.domain().outside(x.row(r).transpose());
            outside += flag;
            fmt::format_to(std::back_inserter(buffer), ",{}", flag ? 1 : 0);
        }
        buffer.push_back('\n');
        if (buffer.size() > (1 << 20)) {
            if (interrupted())
                throw Interrupted("wavestack predict: interrupted; no output was written");
            out.write(std::string_view(buffer.data(), buffer.size()));
            buffer.clear();
        }
    }
    out.write(std::string_view(buffer.data(), buffer.size()));
    out.commit();
    if (command.flagOutside && outside > 0)
        std::fprintf(stderr, "wavestack predict: %ld of %ld rows lie outside the training domain; their "
                     "predictions are extrapolation\n", long(outside), long(table.rows()));
    return exitOk;
}

}  // namespace wavestack::cli
