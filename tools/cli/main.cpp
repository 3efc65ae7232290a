// `wavestack`: fit, predict, inspect and verify surrogate models from CSV
// files. Built on the library's public API only.

#include <charconv>
#include <cstdio>
#include <cstring>
#include <string>
#include <exception>
#include <new>

#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include "commands.hpp"
#include "input_error.hpp"
#include "interrupt.hpp"
#include "wavestack/core/allocator.hpp"
#include "wavestack/core/error.hpp"
#include "wavestack/io/model_file.hpp"

namespace {

using namespace wavestack::cli;

constexpr const char* footer =
    "Exit codes: 0 success; 1 verify found the model out of tolerance; 2 bad command line or input file;\n"
    "3 the computation failed; 130 interrupted (Ctrl-C). Errors are one line on stderr.\n"
    "A model is an approximation, valid only inside its training domain; design decisions defer to the\n"
    "applicable codes and licensed engineering practice.";

/// Readable checks for numeric options ("--width: must be a whole number >= 1, not 0").
CLI::Validator wholeNumber(long long minimum)
{
    return CLI::Validator(
        [minimum](std::string& text) -> std::string {
            long long value = 0;
            const auto [end, status] = std::from_chars(text.data(), text.data() + text.size(), value);
            if (status != std::errc() || end != text.data() + text.size() || value < minimum)
                return "must be a whole number >= " + std::to_string(minimum) + ", not '" + text + "'";
            return "";
        },
        "INTEGER >= " + std::to_string(minimum));
}

CLI::Validator realNumber(double minimum, double maximum)
{
    const std::string range = fmt::format("in [{:g}, {:g}]", minimum, maximum);
    return CLI::Validator(
        [=](std::string& text) -> std::string {
            double value = 0.0;
            const auto [end, status] = std::from_chars(text.data(), text.data() + text.size(), value);
            if (status != std::errc() || end != text.data() + text.size() || !(value >= minimum && value <= maximum))
                return "must be a number " + range + ", not '" + text + "'";
            return "";
        },
        "NUMBER " + range);
}

constexpr double huge = 1e300;

/// An option that takes exactly one value per use and may be repeated.
template <class T>
CLI::Option* repeatable(CLI::App* app, const std::string& name, T& target, const std::string& help)
{
    return app->add_option(name, target, help)->expected(1)->multi_option_policy(CLI::MultiOptionPolicy::TakeAll);
}

int run(int argc, char** argv)
{
    CLI::App app{"wavestack: surrogate models from sampled data (deep residual random Fourier feature networks)",
                 "wavestack"};
    app.footer(footer);
    app.require_subcommand(1);

    FitCommand fit;
    CLI::App* fitApp = app.add_subcommand("fit", "Fit a model to a CSV file (header row, one sample per row)");
    fitApp->add_option("DATA", fit.data, "CSV file of samples")->required();
    fitApp->add_option("-o,--output", fit.model, "Model file to write (.wsm)")->required();
    repeatable(fitApp, "--target", fit.targets, "Output column (repeat for several; default: the last column)");
    fitApp->add_option("--inputs", fit.inputs, "Input columns, comma separated (default: every other column whose "
                                               "first data cell looks numeric)");
    fitApp->add_option("--layers", fit.layers, "Residual layers after the initial one, at most (default 8, "
                                               "early-stopped on the held-out rows)")
        ->check(wholeNumber(0));
    fitApp->add_option("--width", fit.width, "Parameter rows per layer (default: training rows / 2, in [16, 512])")
        ->check(wholeNumber(1));
    fitApp->add_option("--sampler", fit.sampler, "Frequency sampler (default gaussian)")
        ->check(CLI::IsMember({"metropolis", "gaussian"}));
    fitApp->add_option("--features", fit.features, "Feature maps (default: fourier or both, chosen by "
                                                   "leave-one-out error)")
        ->check(CLI::IsMember({"fourier", "ridge", "both"}));
    fitApp->add_option("--tune", fit.tuneEpochs, "Most epochs of global Adam fine-tuning, kept only as far as it "
                                                 "lowers the held-out error (default 100; 0: off)")
        ->check(wholeNumber(0));
    fitApp->add_option("--holdout", fit.holdout, "Fraction of rows held out for early stopping and the stored "
                                                 "metrics (default 0.2; 0 with fewer than 100 rows)")
        ->check(realNumber(0.0, 0.9));
    fitApp->add_option("--lambda", fit.lambda, "Ridge (Tikhonov) weight, outputs standardised (default: chosen by "
                                               "leave-one-out error)")
        ->check(realNumber(0.0, 1e6));
    fitApp->add_option("--frequency-stddev", fit.frequencyStddev,
                       "Spread of the initial frequencies, inputs scaled to [-1, 1] (default: chosen by "
                       "leave-one-out error)")
        ->check(realNumber(1e-6, 1e6));
    fitApp->add_option("--time-limit", fit.timeLimit, "Seconds; past it no layer is started and tuning stops, "
                                                      "keeping what was done (default 0: no limit)")
        ->check(realNumber(0.0, huge));
    fitApp->add_flag("--no-kernel", fit.noKernel,
                     "Never a kernel term (tried by default up to 1 000 training rows); its evaluation costs one "
                     "exponential per training row and runs in double");
    fitApp->add_option("--seed", fit.seed, "Seed of every random choice (default 1)")->check(wholeNumber(0));
    fitApp->add_option("--threads", fit.threads, "Worker threads (default: all; the model does not depend on it)")
        ->check(wholeNumber(0));
    fitApp->add_flag("-q,--quiet", fit.quiet, "No progress and no summary");

    PredictCommand predict;
    CLI::App* predictApp = app.add_subcommand("predict", "Evaluate a model on the rows of a CSV file");
    predictApp->add_option("MODEL", predict.model, "Model file")->required();
    predictApp->add_option("DATA", predict.data, "CSV file with the model's input columns (any order)")->required();
    predictApp->add_option("-o,--output", predict.output, "CSV file to write (default: standard output)");
    predictApp->add_flag("--gradient", predict.gradient, "Add d(output)/d(input) columns");
    predictApp->add_flag("--flag-outside", predict.flagOutside,
                         "Add an outside_domain column: 1 where the row is outside the training domain");

    InfoCommand info;
    CLI::App* infoApp = app.add_subcommand("info", "Describe a model file");
    infoApp->add_option("MODEL", info.model, "Model file")->required();

    VerifyCommand verify;
    CLI::App* verifyApp = app.add_subcommand("verify", "Check a model against reference data; exit 1 if out of "
                                                       "tolerance");
    verifyApp->add_option("MODEL", verify.model, "Model file")->required();
    verifyApp->add_option("DATA", verify.data, "CSV file with the model's input and output columns")->required();
    verifyApp->add_option("--max-rel-rmse", verify.maxRelRmse, "Largest allowed RMSE / standard deviation per output")
        ->check(realNumber(0.0, huge));
    verifyApp->add_option("--max-abs-error", verify.maxAbsError, "Largest allowed absolute error per output")
        ->check(realNumber(0.0, huge));
    verifyApp->add_option("--worst", verify.worst, "Worst rows to print per output (default 5)")
        ->check(wholeNumber(0));

    ReportCommand report;
    CLI::App* reportApp = app.add_subcommand("report", "Write a self-contained HTML report of a model on data");
    reportApp->add_option("MODEL", report.model, "Model file")->required();
    reportApp->add_option("DATA", report.data, "CSV file with the model's input and output columns")->required();
    reportApp->add_option("-o,--output", report.output, "HTML file to write")->required();

    // CLI11 would only say "a subcommand is required"; name the word instead.
    if (argc > 1 && argv[1][0] != '-') {
        bool known = false;
        for (const CLI::App* sub : app.get_subcommands({}))
            known = known || sub->get_name() == argv[1];
        if (!known) {
            std::fprintf(stderr, "wavestack: unknown command '%s'; the commands are fit, predict, info, verify, "
                                 "report (see wavestack --help)\n", argv[1]);
            return exitInputError;
        }
    }
    try {
        app.parse(argc, argv);
    } catch (const CLI::CallForHelp& e) {
        return app.exit(e);
    } catch (const CLI::CallForAllHelp& e) {
        return app.exit(e);
    } catch (const CLI::ParseError& e) {
        std::fprintf(stderr, "wavestack: %s (see wavestack --help)\n", e.what());
        return exitInputError;
    }

    catchInterrupts();
    if (*fitApp)
        return runFit(fit);
    if (*predictApp)
        return runPredict(predict);
    if (*infoApp)
        return runInfo(info);
    if (*verifyApp)
        return runVerify(verify);
    return runReport(report);
}

}  // namespace

int main(int argc, char** argv)
{
    wavestack::retainFreedMemory();  // fits run about 1.5x faster (core/allocator.hpp)
    // Every failure becomes one line on stderr and an exit code; never a stack trace.
    try {
        return run(argc, argv);
    } catch (const Interrupted& e) {
        std::fprintf(stderr, "%s\n", e.what());
        return interruptedExitCode();
    } catch (const InputError& e) {
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitInputError;
    } catch (const wavestack::InvalidInput& e) {
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitInputError;
    } catch (const wavestack::ModelFileError& e) {
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitInputError;
    } catch (const wavestack::NumericalError& e) {
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitFailed;
    } catch (const wavestack::Error& e) {  // files that cannot be opened or written
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitInputError;
    } catch (const std::bad_alloc&) {
        std::fprintf(stderr, "wavestack: out of memory (the data or the model is too large for this machine)\n");
        return exitFailed;
    } catch (const std::exception& e) {
        std::fprintf(stderr, "wavestack: %s\n", e.what());
        return exitFailed;
    }
}
