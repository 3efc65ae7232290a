// `wavestack report`: one self-contained HTML page showing how good a model is
// on reference data.

#include <fmt/format.h>

#include "commands.hpp"
#include "csv_table.hpp"
#include "model_columns.hpp"
#include "output_file.hpp"
#include "report_page.hpp"
#include "wavestack/io/model_file.hpp"

namespace wavestack::cli {

int runReport(const ReportCommand& command)
{
    const Network network = readModel(command.model);
    const CsvTable table = CsvTable::read(command.data);
    ReportData data;
    data.modelPath = command.model;
    data.dataPath = command.data;
    data.inputs = table.numbers(findColumns(table, inputNames(network), "model input"));
    data.reference = table.numbers(findColumns(table, outputNames(network), "model output"));
    data.predicted = network.evaluateBatch(data.inputs);
    OutputFile out(command.output);
    out.write(renderReport(network, data));
    out.commit();
    return exitOk;
}

}  // namespace wavestack::cli
