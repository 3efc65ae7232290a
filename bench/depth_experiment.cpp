// The depth experiment: a shallow network against a deep residual network of
// the same total width, trained layer by layer (Kammonen et al., "Smaller
// generalization error derived for a deep residual neural network compared to
// shallow networks", 2020/2023), on the regularised discontinuity
// Si(x_1 / a) exp(-|x|^2 / 2), a = 0.01, x ~ N(0, I_3).
//
// N = 10 000 training points (20 % of them held out inside fit for sampler
// snapshots and early stopping) and 20 000 test points. Writes a Markdown
// table to the path given as the first argument (default: stdout only).
//
//   depth_experiment [table.md] [metropolis iterations, default 40]
#include <chrono>
#include <cstdio>
#include <filesystem>
#include <fstream>
#include <iostream>
#include <sstream>
#include <string>
#include <vector>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/train/auto_fit.hpp>
#include <wavestack/wavestack.hpp>

using namespace wavestack;

namespace {

test_functions::Sample siFront(Index n, std::uint64_t seed)
{
    Random random(seed);
    return test_functions::drawSiFront(n, 3, 0.01, random);
}

const char* mixName(FeatureMix mix)
{
    return mix == FeatureMix::fourier ? "Fourier" : mix == FeatureMix::ridge ? "ridge" : "Fourier + ridge";
}

}  // namespace

int main(int argc, char** argv)
{
    retainFreedMemory();  // core/allocator.hpp
    const std::string tablePath = argc > 1 ? argv[1] : "";
    const Index iterations = argc > 2 ? std::stol(argv[2]) : 40;
    // Checked before the 8-minute run, not after it.
    const std::filesystem::path folder = std::filesystem::path(tablePath).parent_path();
    if (!folder.empty() && !std::filesystem::is_directory(folder)) {
        std::cerr << "depth_experiment: folder '" << folder.string() << "' does not exist\n";
        return 2;
    }
    const test_functions::Sample train = siFront(10000, 1), test = siFront(20000, 2);
    const Index residualLayers = 4;

    std::ostringstream table;
    table << "| features | total width | shallow (L = 0) | deep (L = " << residualLayers
          << ", running prediction) | deep (L = " << residualLayers
          << ", residual state) | shallow / deep | fit s (shallow, deep) |\n"
          << "|---|---|---|---|---|---|---|\n";
    for (auto mix : {FeatureMix::fourier, FeatureMix::both}) {
        for (Index total : {64, 128, 256, 512, 1024}) {
            double error[3], seconds[3];
            for (int variant = 0; variant < 3; ++variant) {
                FitOptions options;
                options.features = mix;
                options.lambda = 1e-5;
                options.sampler = SamplerKind::metropolis;
                options.metropolis.iterations = iterations;
                options.validationFraction = 0.2;
                options.threads = 2;
                options.patience = 2;
                options.layers = variant == 0 ? 0 : residualLayers;
                options.width = total / (options.layers + 1);  // input rows per layer; equal total width
                options.stateInput = variant == 2 ? StateInput::residualState : StateInput::runningPrediction;
                const auto start = std::chrono::steady_clock::now();
                const Network net = fit(train.x, train.y, options);
                seconds[variant] = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
                error[variant] = measureErrors(net.evaluateBatch(test.x).col(0), test.y.col(0)).relativeRmse;
                std::cerr << mixName(mix) << " total " << total << " variant " << variant << ": " << error[variant]
                          << " (" << net.residualLayerCount() << " residual layers kept, " << seconds[variant]
                          << " s)\n";
            }
            char row[256];
            std::snprintf(row, sizeof row, "| %s | %ld | %.3f | %.3f | %.3f | %.2fx | %.0f, %.0f |\n", mixName(mix),
                          long(total), error[0], error[1], error[2], error[0] / error[1], seconds[0], seconds[1]);
            table << row;
        }
    }
    std::cout << table.str();

    // The same comparison after global tuning by Adam (Kingma & Ba 2015), in
    // autoFit's compact shape (detail::compactTunedOptions: Fourier + ridge,
    // 128 input rows per layer, Metropolis 30 iterations, amplitude penalty
    // 1e-3) with the whole 1 000-epoch schedule. The shallow network gets the
    // deep one's state rows as input rows too (640 + 128 = 768), and the same
    // Adam schedule over its parameters.
    std::ostringstream tuned;
    tuned << "| seed | shallow (L = 0, 768 rows) + Adam | deep (L = 4, 5 x 128 + 4 x 32 rows) + Adam | shallow / "
             "deep | fit s (shallow, deep) |\n|---|---|---|---|---|\n";
    for (std::uint64_t seed : {1, 2, 3}) {
        double error[2], seconds[2];
        for (int deep = 0; deep < 2; ++deep) {
            FitOptions base;
            base.validationFraction = 0.2;
            base.threads = 2;
            base.seed = seed;
            FitOptions options = detail::compactTunedOptions(base, train.x.rows());
            options.tune.epochs = options.tune.patience = 1000;
            if (!deep) {
                options.layers = 0;
                options.width = 768;
            }
            const auto start = std::chrono::steady_clock::now();
            const Network net = fit(train.x, train.y, options);
            seconds[deep] = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
            error[deep] = measureErrors(net.evaluateBatch(test.x).col(0), test.y.col(0)).relativeRmse;
            std::cerr << "tuned, seed " << seed << (deep ? ", deep: " : ", shallow: ") << error[deep] << " ("
                      << seconds[deep] << " s)\n";
        }
        char row[256];
        std::snprintf(row, sizeof row, "| %lu | %.3f | %.3f | %.2fx | %.0f, %.0f |\n", static_cast<unsigned long>(seed),
                      error[0], error[1], error[0] / error[1], seconds[0], seconds[1]);
        tuned << row;
    }
    std::cout << tuned.str();
    if (!tablePath.empty()) {
        std::ofstream out(tablePath);
        out << "Held-out relative RMSE (RMSE / std of 20 000 test values) on Si(x_1/0.01) exp(-|x|^2/2), "
               "x ~ N(0, I_3), N = 10 000 (20 % held out inside fit), Metropolis sampling ("
            << iterations
            << " iterations per layer, rows resampled by amplitude), lambda 1e-5, 2 threads. Total width counts the input rows of all layers "
               "(shallow width = (L + 1) K); each residual layer also has a state group of K / 4 Fourier rows. "
               "Produced by bench/depth_experiment.cpp.\n\n"
            << table.str()
            << "\nAfter global tuning by Adam: the compact shape autoFit tries on fronts (Fourier + ridge, "
               "Metropolis 30 iterations, step cap 0.3, lambda 1e-5), then Adam for 1 000 epochs (batch 128, rates 2e-3, amplitude "
               "penalty 1e-3, the best held-out epoch kept); fit seeds 1-3 on the same data. The shallow network "
               "has as many parameter rows as the deep one's input and state rows together.\n\n"
            << tuned.str();
        if (!out.good()) {
            std::cerr << "depth_experiment: could not write " << tablePath << '\n';
            return 1;
        }
    }
    return 0;
}
