// `wavestack info`: what a model file holds, for people and for logs.

#include <fstream>

#include <fmt/format.h>
#include <fmt/ranges.h>  // fmt::join

#include "commands.hpp"
#include "input_error.hpp"
#include "model_columns.hpp"
#include "wavestack/io/model_file.hpp"

namespace wavestack::cli {
namespace {

/// The format version in bytes 8..11 (little-endian), as io/model_file.hpp documents.
std::uint32_t fileVersion(const std::string& path)
{
    std::ifstream in(path, std::ios::binary);
    unsigned char header[12] = {};
    in.read(reinterpret_cast<char*>(header), sizeof header);
    return std::uint32_t(header[8]) | std::uint32_t(header[9]) << 8 | std::uint32_t(header[10]) << 16 |
           std::uint32_t(header[11]) << 24;
}

Index parameterCount(const Network& network)
{
    Index count = 2 * network.inputCount() + 2 * network.outputCount();  // the scalers
    for (const auto& layer : network.layers()) {
        count += layer.amplitudes.size();
        for (const auto& group : layer.groups)
            count += group.parameters.size();
    }
    const KernelTerm& term = network.kernelTerm();
    return count + term.widths.size() + term.centres.size() + term.weights.size();
}

const char* kindName(FeatureKind kind) { return kind == FeatureKind::fourier ? "Fourier" : "ridge"; }

}  // namespace

int runInfo(const InfoCommand& command)
{
    const Network network = readModel(command.model);
    const ModelRecord& record = network.record();
    const std::vector<std::string> inputs = inputNames(network), outputs = outputNames(network);
    const TrainingDomain& domain = network.domain();

    fmt::print("model file:  {} (format version {})\n", command.model, fileVersion(command.model));
    fmt::print("inputs:      {}\n", network.inputCount());
    if (domain.empty())
        fmt::print("  (no training domain stored: inside/outside checks are unavailable)\n");
    for (Index j = 0; j < network.inputCount(); ++j) {
        if (domain.empty())
            fmt::print("  {}\n", inputs[std::size_t(j)]);
        else
            fmt::print("  {:<20} trained on [{:.6g}, {:.6g}], mean {:.6g}\n", inputs[std::size_t(j)],
                       domain.lower()[j], domain.upper()[j], domain.mean()[j]);
    }
    fmt::print("outputs:     {}\n", network.outputCount());
    for (Index o = 0; o < network.outputCount(); ++o)
        fmt::print("  {:<20} training mean {:.6g}, standard deviation {:.6g}\n", outputs[std::size_t(o)],
                   network.outputScaler().mean()[o], network.outputScaler().deviation()[o]);

    fmt::print("network:     initial layer + {} residual layer(s); state input: {}\n", network.residualLayerCount(),
               network.stateInput() == StateInput::runningPrediction ? "running prediction" : "residual state");
    for (std::size_t l = 0; l < network.layers().size(); ++l) {
        std::vector<std::string> groups;
        for (const auto& group : network.layers()[l].groups) {
            const Index d = group.parameters.cols() - 1;
            if (group.kind == FeatureKind::ridge && group.width() == 1 && group.parameters.leftCols(d).isZero(0.0))
                groups.push_back("constant term");  // see LayerProblem::interceptGroup
            else
                groups.push_back(fmt::format("{} {} on the {}", group.width(), kindName(group.kind),
                                             group.source == FeatureSource::input ? "inputs" : "state"));
        }
        fmt::print("  layer {}: {}\n", l, fmt::join(groups, ", "));
    }
    if (!network.kernelTerm().empty())
        fmt::print("  kernel term: {} Gaussian bumps centred on training points, added to the layers\n",
                   network.kernelTerm().centreCount());
    fmt::print("parameters:  {} ({} parameter rows)\n", parameterCount(network), network.width());
    if (record.fitSeconds > 0.0)
        fmt::print("fit time:    {:.2f} s\n", record.fitSeconds);

    if (record.heldOutMetrics.empty()) {
        fmt::print("held-out metrics: none stored\n");
    } else {
        fmt::print("held-out metrics (measured at fit time):\n");
        fmt::print("  {:<20} {:>12} {:>12} {:>14} {:>10} {:>12}\n", "output", "RMSE", "rel. RMSE", "max abs error",
                   "R^2", "correlation");
        for (std::size_t o = 0; o < record.heldOutMetrics.size(); ++o) {
            const ErrorMetrics& m = record.heldOutMetrics[o];
            fmt::print("  {:<20} {:>12.4g} {:>12.3e} {:>14.4g} {:>10.6f} {:>12.6f}\n", outputs[o], m.rmse,
                       m.relativeRmse, m.maxAbsError, m.rSquared, m.correlation);
        }
    }
    if (!record.history.empty()) {
        fmt::print("training curve (RMSE in standard deviations of the output):\n");
        for (const auto& step : record.history)
            fmt::print("  layer {:<3} training {:.3e}{}\n", step.layer, step.trainingRmse,
                       step.validationRmse >= 0.0 ? fmt::format("  held-out {:.3e}", step.validationRmse) : "");
    }
    if (!record.tuningHistory.empty()) {
        const TuningStep& first = record.tuningHistory.front();
        const TuningStep& last = record.tuningHistory.back();
        fmt::print("Adam tuning: {} epochs, training {:.3e} -> {:.3e}", last.epoch, first.trainingRmse,
                   last.trainingRmse);
        if (first.validationRmse >= 0.0)
            fmt::print(", held-out {:.3e} -> {:.3e}", first.validationRmse, last.validationRmse);
        fmt::print("\n");
    }
    if (!record.settings.empty()) {
        fmt::print("training settings:\n");
        std::size_t start = 0;
        while (start < record.settings.size()) {
            std::size_t end = record.settings.find('\n', start);
            if (end == std::string::npos)
                end = record.settings.size();
            fmt::print("  {}\n", record.settings.substr(start, end - start));
            start = end + 1;
        }
    }
    fmt::print("This model is an approximation, valid only inside its training domain; design decisions defer "
               "to the applicable codes and licensed engineering practice.\n");
    return exitOk;
}

}  // namespace wavestack::cli
