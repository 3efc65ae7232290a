#pragma once
/// \file
/// Settings chosen from the data instead of by the user, each by held-out
/// error (the rows FitOptions::validationFraction sets aside).

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/train/fit.hpp"

namespace wavestack {

/// Factor-2 steps from 1/32 to 16, plus the library default (so the choice is
/// never worse on held-out rows than not choosing).
inline std::vector<double> frequencyStddevGrid()
{
    std::vector<double> grid;
    for (double s = 1.0 / 32.0; s <= 16.0; s *= 2.0)
        grid.push_back(s);
    grid.push_back(GaussianSampler::defaultStddev);
    std::sort(grid.begin(), grid.end());
    return grid;
}

/// The Gaussian frequency spread (FitOptions::frequencyStddev) with the
/// lowest held-out relative RMSE, averaged over outputs, of shallow
/// Gaussian-sampled fits with `options`' width, features and lambda, over
/// frequencyStddevGrid() (inputs scaled to [-1, 1]).
///
/// Why it is needed: the best spread depends on the target by orders of
/// magnitude. With 1 600 borehole rows (8 inputs) and width 200, spread 0.15
/// gave held-out relative RMSE 3.6e-3, the library default 3 gave 1.1 (the
/// default suits oscillatory targets such as Ishigami). A shallow fit is the
/// cheap proxy; deeper layers and the Metropolis chain then start from it.
///
/// At most `maxRows` rows (a seeded random subset) are used, so the search
/// costs a bounded multiple of one layer's solve. Each trial reports through
/// options.progress with stage "search" (layer = trial index); a false
/// return cancels (throws Cancelled).
inline double chooseFrequencyStddev(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options,
                                    Index maxRows = 4000)
{
    detail::checkTrainingData(inputs, outputs, options);
    const std::vector<double> grid = frequencyStddevGrid();

    Matrix x = inputs, y = outputs;
    if (inputs.rows() > maxRows) {
        Random random(options.seed ^ 0x5eed5eedULL);
        const std::vector<Index> order = detail::shuffledRows(inputs.rows(), random);
        x = detail::selectRows(inputs, order, 0, maxRows);
        y = detail::selectRows(outputs, order, 0, maxRows);
    }
    FitOptions trial = options;
    trial.layers = 0;
    trial.tune.epochs = 0;
    trial.initialization = Initialization::layerByLayer;
    trial.sampler = SamplerKind::gaussian;
    if (trial.validationFraction <= 0.0)
        trial.validationFraction = 0.2;
    if (!trial.inputBox)  // scale as the full data will be scaled, not as the subset
        trial.inputBox = InputBox{inputs.colwise().minCoeff().transpose(), inputs.colwise().maxCoeff().transpose()};

    const auto start = std::chrono::steady_clock::now();
    double best = grid.front(), bestError = std::numeric_limits<double>::infinity();
    for (std::size_t i = 0; i < grid.size(); ++i) {
        trial.frequencyStddev = grid[i];
        trial.progress = [&](const FitProgress&) {
            const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
            return !options.progress || options.progress(FitProgress{"search", Index(i), seconds, SamplerProgress(),
                                                                     -1.0, -1.0, TuneProgress()});
        };
        double error = 0.0;
        try {
            const Network network = fit(x, y, trial);
            for (const auto& metric : network.record().heldOutMetrics)
                error += metric.relativeRmse / double(network.record().heldOutMetrics.size());
        } catch (const NumericalError&) {
            continue;  // a spread the solver cannot handle is simply not chosen
        }
        if (error < bestError) {
            bestError = error;
            best = grid[i];
        }
    }
    return best;
}

}  // namespace wavestack
