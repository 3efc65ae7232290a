// `wavestack fit`: CSV of samples in, model file out.

#include <algorithm>
#include <chrono>
#include <cerrno>
#include <cmath>
#include <cstring>
#include <cstdio>
#include <thread>
#include <unistd.h>

#include <fmt/format.h>
#include <fmt/ranges.h>  // fmt::join

#include "commands.hpp"
#include "csv_table.hpp"
#include "input_error.hpp"
#include "progress_display.hpp"
#include "wavestack/io/model_file.hpp"
#include "wavestack/train/auto_fit.hpp"
#include "wavestack/train/fit.hpp"

namespace wavestack::cli {
namespace {

/// Which columns are outputs and which are inputs. Targets default to the
/// last column; inputs to every other column unless its first data cell is
/// text (starts with a letter other than the "nan"/"inf" spellings, e.g. a
/// run label): such columns are skipped. A column that looks numeric in its
/// first row is numeric, so a typo or NaN anywhere in it is an error, never a
/// reason to drop the column silently.
struct ColumnChoice {
    std::vector<Index> inputs, targets;
    std::vector<std::string> skipped;
};

bool looksLikeText(std::string_view cell)
{
    while (!cell.empty() && (cell.front() == ' ' || cell.front() == '"'))
        cell.remove_prefix(1);
    if (cell.empty())
        return false;  // an empty cell is a missing number
    const char c = cell.front();
    const bool numeric = (c >= '0' && c <= '9') || c == '+' || c == '-' || c == '.';
    auto startsWith = [&](const char* word) {
        for (std::size_t i = 0; word[i]; ++i)
            if (i >= cell.size() || (cell[i] | 0x20) != word[i])
                return false;
        return true;
    };
    return !numeric && !startsWith("nan") && !startsWith("inf");
}

/// "a, b,c" -> {"a", "b", "c"}.
std::vector<std::string> splitNames(const std::string& text)
{
    std::vector<std::string> names;
    std::size_t start = 0;
    for (;;) {
        const std::size_t comma = text.find(',', start);
        std::string name = text.substr(start, comma == std::string::npos ? std::string::npos : comma - start);
        name.erase(0, name.find_first_not_of(' '));
        name.erase(name.find_last_not_of(' ') + 1);
        if (name.empty())
            throw InputError(fmt::format("--inputs \"{}\": an empty column name", text));
        names.push_back(std::move(name));
        if (comma == std::string::npos)
            return names;
        start = comma + 1;
    }
}

ColumnChoice chooseColumns(const CsvTable& table, const FitCommand& command)
{
    ColumnChoice choice;
    if (command.targets.empty())
        choice.targets.push_back(Index(table.columns().size()) - 1);
    for (const auto& name : command.targets)
        choice.targets.push_back(table.require(name, "--target"));
    auto contains = [](const std::vector<Index>& list, Index c) {
        return std::count(list.begin(), list.end(), c) > 0;
    };
    for (std::size_t i = 0; i < choice.targets.size(); ++i)
        if (std::count(choice.targets.begin(), choice.targets.end(), choice.targets[i]) > 1)
            throw InputError(fmt::format("--target \"{}\" is given twice", command.targets[i]));
    if (!command.inputs.empty()) {
        for (const auto& name : splitNames(command.inputs)) {
            const Index c = table.require(name, "--inputs");
            if (contains(choice.targets, c))
                throw InputError(fmt::format("--inputs: column \"{}\" is also a target", name));
            if (contains(choice.inputs, c))
                throw InputError(fmt::format("--inputs: column \"{}\" is listed twice", name));
            choice.inputs.push_back(c);
        }
    } else {
        std::vector<std::string_view> cells;
        table.split(0, cells);
        for (Index c = 0; c < Index(table.columns().size()); ++c) {
            if (contains(choice.targets, c))
                continue;
            if (looksLikeText(cells[std::size_t(c)]))
                choice.skipped.push_back(table.columns()[std::size_t(c)]);
            else
                choice.inputs.push_back(c);
        }
    }
    if (choice.inputs.empty())
        throw InputError(fmt::format("{}: no numeric input columns besides the target(s)", table.path()));
    return choice;
}

/// Fails now, not after a long fit, when the model file cannot be created.
void checkWritable(const std::string& path)
{
    const std::string probe = path + ".tmp";
    std::FILE* file = std::fopen(probe.c_str(), "wb");
    if (!file)
        throw InputError(fmt::format("{}: cannot create the model file: {}", path, std::strerror(errno)));
    std::fclose(file);
    std::remove(probe.c_str());
}

/// The user's flags; everything unset is chosen by autoFit from the data
/// (train/auto_fit.hpp documents how).
AutoFitOptions chooseOptions(const FitCommand& command, Index rows, Index inputs)
{
    AutoFitOptions options;
    options.validationFraction = command.holdout.value_or(rows >= 100 ? 0.2 : 0.0);
    const auto training = Index(std::floor(double(rows) * (1.0 - options.validationFraction)));
    if (training < 2 * inputs + 2)
        throw InputError(fmt::format("{} training rows are too few to fit {} inputs (at least {} are needed)",
                                     training, inputs, 2 * inputs + 2));
    options.width = command.width;
    options.layers = command.layers;
    options.tuneEpochs = command.tuneEpochs;
    options.lambda = command.lambda;
    options.frequencyStddev = command.frequencyStddev;
    if (command.sampler)
        options.sampler = *command.sampler == "metropolis" ? SamplerKind::metropolis : SamplerKind::gaussian;
    if (command.features)
        options.features = *command.features == "ridge"  ? FeatureMix::ridge
                           : *command.features == "both" ? FeatureMix::both
                                                         : FeatureMix::fourier;
    options.timeLimit = command.timeLimit;
    options.kernelTerm = !command.noKernel;
    options.seed = command.seed;
    options.threads = command.threads > 0 ? command.threads
                                          : std::max<Index>(1, Index(std::thread::hardware_concurrency()));
    return options;
}

/// The value of "key = value" in the record's settings text.
std::string setting(const ModelRecord& record, const std::string& key)
{
    const std::string& text = record.settings;
    const auto at = text.find(key + " = ");
    if (at == std::string::npos)
        return "?";
    const auto begin = at + key.size() + 3;
    return text.substr(begin, text.find('\n', begin) - begin);
}

/// What Adam tuning did: epochs run and the epoch whose parameters were kept.
std::string tuningSummary(const ModelRecord& record)
{
    if (record.tuningHistory.empty())
        return "";
    const auto& steps = record.tuningHistory;
    if (steps.front().validationRmse < 0.0)
        return fmt::format(", Adam tuning {} epochs", steps.back().epoch);
    const auto best = std::min_element(steps.begin(), steps.end(), [](const TuningStep& a, const TuningStep& b) {
        return a.validationRmse < b.validationRmse;
    });
    return fmt::format(", Adam tuning ran {} epochs and kept epoch {}{}", steps.back().epoch, best->epoch,
                       best->epoch == 0 ? " (tuning did not lower the held-out error)" : "");
}

std::vector<std::string> namesOf(const CsvTable& table, const std::vector<Index>& columns)
{
    std::vector<std::string> names;
    for (Index c : columns)
        names.push_back(table.columns()[std::size_t(c)]);
    return names;
}

}  // namespace

int runFit(const FitCommand& command)
{
    checkWritable(command.model);
    const CsvTable table = CsvTable::read(command.data);
    const ColumnChoice columns = chooseColumns(table, command);
    const Matrix inputs = table.numbers(columns.inputs);
    const Matrix outputs = table.numbers(columns.targets);

    AutoFitOptions options = chooseOptions(command, table.rows(), inputs.cols());
    options.inputNames = namesOf(table, columns.inputs);
    options.outputNames = namesOf(table, columns.targets);
    const auto mode = command.quiet             ? ProgressDisplay::Mode::quiet
                      : isatty(fileno(stderr)) ? ProgressDisplay::Mode::live
                                                : ProgressDisplay::Mode::lines;
    const bool metropolis = options.sampler == SamplerKind::metropolis;
    const bool split = options.validationFraction > 0.0;
    ProgressDisplay display(mode, options.layers.value_or(split ? autoMaxLayers : 0),
                            metropolis ? MetropolisSettings().iterations : 1,
                            options.tuneEpochs.value_or(split ? autoTuneEpochs : 0));
    options.progress = [&display](const FitProgress& p) { return display(p); };

    Network network;
    try {
        network = autoFit(inputs, outputs, options);
    } catch (const Cancelled&) {
        display.finish();
        throw Interrupted("wavestack fit: interrupted; no model was written");
    }
    display.finish();
    saveModel(network, command.model);

    if (command.quiet)
        return exitOk;
    const auto held = Index(std::ceil(options.validationFraction * double(table.rows())));
    fmt::print("wrote {}\n", command.model);
    const ModelRecord& record = network.record();
    if (record.settings.find("refit on all") != std::string::npos)
        fmt::print("rows:    {} ({} held out to choose settings and measure the error below, then the model was "
                   "refitted on all rows)\n",
                   table.rows(), held);
    else
        fmt::print("rows:    {} ({} training, {} held out)\n", table.rows(), table.rows() - held, held);
    fmt::print("inputs:  {} ({})\n", inputs.cols(), fmt::join(options.inputNames, ", "));
    if (!columns.skipped.empty())
        fmt::print("skipped: {} (text in the first data row)\n", fmt::join(columns.skipped, ", "));
    fmt::print("outputs: {} ({})\n", outputs.cols(), fmt::join(options.outputNames, ", "));
    fmt::print("network: {} residual layer(s) after the initial one, width {} per layer, {} parameter rows in all, "
               "{} sampler, {} features, frequency spread {}, lambda {}{}\n",
               network.residualLayerCount(), setting(record, "width"), network.width(), setting(record, "sampler"),
               setting(record, "features"), setting(record, "frequency stddev"), setting(record, "lambda"),
               tuningSummary(record));
    fmt::print("time:    {:.2f} s\n", record.fitSeconds);
    if (record.heldOutMetrics.empty()) {
        fmt::print("held-out: none (no held-out split); the model's error is unmeasured - run `wavestack verify` "
                   "on independent data\n");
    } else {
        fmt::print("held-out {:<20} {:>12} {:>14} {:>10}\n", "output", "rel. RMSE", "max abs error", "R^2");
        for (std::size_t o = 0; o < record.heldOutMetrics.size(); ++o) {
            const ErrorMetrics& m = record.heldOutMetrics[o];
            fmt::print("         {:<20} {:>12.3e} {:>14.4g} {:>10.6f}\n", options.outputNames[o], m.relativeRmse,
                       m.maxAbsError, m.rSquared);
        }
    }
    fmt::print("The model approximates the data only inside its training domain (see `wavestack info`); "
               "design decisions defer to the applicable codes and licensed engineering practice.\n");
    return exitOk;
}

}  // namespace wavestack::cli
