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

namespace detail {

/// Shallow Gaussian-sampled trial fits on (a seeded subset of at most
/// `maxRows` rows of) the data, each scored by its held-out relative RMSE
/// averaged over outputs. Trials report through options.progress with stage
/// "search" (layer = trial number); a false return cancels (throws Cancelled).
class ShallowTrials {
public:
    ShallowTrials(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options, Index maxRows)
        : m_options(options), m_start(std::chrono::steady_clock::now())
    {
        checkTrainingData(inputs, outputs, options);
        m_x = inputs;
        m_y = outputs;
        if (inputs.rows() > maxRows) {
            Random random(options.seed ^ 0x5eed5eedULL);
            const std::vector<Index> order = shuffledRows(inputs.rows(), random);
            m_x = selectRows(inputs, order, 0, maxRows);
            m_y = selectRows(outputs, order, 0, maxRows);
        }
        m_trial = options;
        m_trial.layers = 0;
        m_trial.tune.epochs = 0;
        m_trial.initialization = Initialization::layerByLayer;
        m_trial.sampler = SamplerKind::gaussian;
        if (m_trial.validationFraction <= 0.0)
            m_trial.validationFraction = 0.2;
        if (!m_trial.inputBox)  // scale as the full data will be scaled, not as the subset
            m_trial.inputBox = InputBox{inputs.colwise().minCoeff().transpose(),
                                        inputs.colwise().maxCoeff().transpose()};
    }

    /// The trial settings; change a field, then call score().
    FitOptions& settings() { return m_trial; }

    /// Held-out error of a shallow fit with the current settings; +inf when
    /// the solver fails (such settings are then simply not chosen).
    double score()
    {
        const Index number = m_count++;
        m_trial.progress = [&](const FitProgress&) {
            const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - m_start).count();
            return !m_options.progress || m_options.progress(FitProgress{"search", number, seconds, SamplerProgress(),
                                                                         -1.0, -1.0, TuneProgress()});
        };
        try {
            const Network network = fit(m_x, m_y, m_trial);
            double error = 0.0;
            for (const auto& metric : network.record().heldOutMetrics)
                error += metric.relativeRmse / double(network.record().heldOutMetrics.size());
            return std::isfinite(error) ? error : std::numeric_limits<double>::infinity();
        } catch (const NumericalError&) {
            return std::numeric_limits<double>::infinity();
        }
    }

    /// The value of `grid` with the lowest score after `set(value)`; leaves
    /// the settings at the best value. Ties keep the earlier value.
    template <class T, class Set>
    T best(const std::vector<T>& grid, Set set, double* bestError = nullptr)
    {
        T chosen = grid.front();
        double lowest = std::numeric_limits<double>::infinity();
        for (const T& value : grid) {
            set(m_trial, value);
            const double error = score();
            if (error < lowest) {
                lowest = error;
                chosen = value;
            }
        }
        set(m_trial, chosen);
        if (bestError)
            *bestError = lowest;
        return chosen;
    }

private:
    FitOptions m_options, m_trial;
    Matrix m_x, m_y;
    std::chrono::steady_clock::time_point m_start;
    Index m_count = 0;
};

}  // namespace detail

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
    detail::ShallowTrials trials(inputs, outputs, options, maxRows);
    return trials.best(frequencyStddevGrid(), [](FitOptions& o, double s) { o.frequencyStddev = s; });
}

}  // namespace wavestack
