// `wavestack verify`: is the model within tolerance on reference data?
// Exit 0 if so, 1 if not; made for host projects' CI.

#include <algorithm>
#include <numeric>

#include <fmt/format.h>
#include <fmt/ranges.h>  // fmt::join

#include "commands.hpp"
#include "csv_table.hpp"
#include "input_error.hpp"
#include "model_columns.hpp"
#include "wavestack/check/metrics.hpp"
#include "wavestack/io/model_file.hpp"

namespace wavestack::cli {

int runVerify(const VerifyCommand& command)
{
    if (!command.maxRelRmse && !command.maxAbsError)
        throw InputError("verify: give a tolerance: --max-rel-rmse and/or --max-abs-error");
    const Network network = readModel(command.model);
    const CsvTable table = CsvTable::read(command.data);
    const std::vector<std::string> inputs = inputNames(network), outputs = outputNames(network);
    const Matrix x = table.numbers(findColumns(table, inputs, "model input"));
    const Matrix reference = table.numbers(findColumns(table, outputs, "model output"));
    const Matrix predicted = network.evaluateBatch(x);
    const std::vector<ErrorMetrics> metrics = measureColumnErrors(predicted, reference);

    Index outside = 0;
    if (!network.domain().empty())
        for (Index r = 0; r < x.rows(); ++r)
            outside += network.domain().outside(x.row(r).transpose());

    bool pass = true;
    fmt::print("verify {} on {} ({} rows{})\n", command.model, command.data, x.rows(),
               outside > 0 ? fmt::format(", {} outside the training domain", outside) : "");
    fmt::print("  {:<20} {:>12} {:>14} {:>10}  result\n", "output", "rel. RMSE", "max abs error", "R^2");
    for (std::size_t o = 0; o < metrics.size(); ++o) {
        const ErrorMetrics& m = metrics[o];
        std::vector<std::string> failures;
        if (command.maxRelRmse && !(m.relativeRmse <= *command.maxRelRmse))
            failures.push_back(fmt::format("rel. RMSE > {:g}", *command.maxRelRmse));
        if (command.maxAbsError && !(m.maxAbsError <= *command.maxAbsError))
            failures.push_back(fmt::format("max abs error > {:g}", *command.maxAbsError));
        pass = pass && failures.empty();
        fmt::print("  {:<20} {:>12.3e} {:>14.4g} {:>10.6f}  {}\n", outputs[o], m.relativeRmse, m.maxAbsError,
                   m.rSquared, failures.empty() ? "ok" : "FAIL: " + fmt::format("{}", fmt::join(failures, ", ")));
    }

    // The worst rows per output, with their line in the file so they can be found.
    for (Index o = 0; o < predicted.cols(); ++o) {
        std::vector<Index> order(std::size_t(x.rows()));
        std::iota(order.begin(), order.end(), Index(0));
        const Index shown = std::min<Index>(command.worst, x.rows());
        std::partial_sort(order.begin(), order.begin() + shown, order.end(), [&](Index a, Index b) {
            return std::abs(predicted(a, o) - reference(a, o)) > std::abs(predicted(b, o) - reference(b, o));
        });
        if (shown > 0)
            fmt::print("worst rows for {}:\n", outputs[std::size_t(o)]);
        for (Index i = 0; i < shown; ++i) {
            const Index r = order[std::size_t(i)];
            std::vector<std::string> point;
            for (Index j = 0; j < x.cols(); ++j)
                point.push_back(fmt::format("{}={:.6g}", inputs[std::size_t(j)], x(r, j)));
            const bool away = !network.domain().empty() && network.domain().outside(x.row(r).transpose());
            fmt::print("  line {:<8} true {:<12.6g} predicted {:<12.6g} error {:<+11.3e} {}{}\n", table.line(r),
                       reference(r, o), predicted(r, o), predicted(r, o) - reference(r, o), fmt::join(point, " "),
                       away ? "  (outside the training domain)" : "");
        }
    }
    fmt::print("{}\n", pass ? "PASS" : "FAIL");
    return pass ? exitOk : exitCheckFailed;
}

}  // namespace wavestack::cli
