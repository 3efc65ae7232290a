#pragma once
/// \file
/// Settings chosen from the data instead of by the user, each by held-out
/// error (the rows FitOptions::validationFraction sets aside).

#include <algorithm>
#include <chrono>
#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/solve/ridge_loo.hpp"
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

/// Up to this many rows shallow trials are scored through the features'
/// singular values, which resolve lambdas below 1e-14; above it through the
/// Gram matrix, which does not. At 800 rows both cost about the same (46
/// against 31 ms per trial on one thread; with two trials side by side on 2
/// threads a borehole fit took 6.4 s against 6.8 s); at 4 000 rows the
/// search took twice as long (borehole, N = 10 000: 48 against 23 s, the
/// whole fit 71 s). solve/ridge_loo.hpp has the accuracy evidence.
constexpr Index autoExactTrialRows = 2000;

namespace detail {

/// Shallow Gaussian-sampled trial fits on (a seeded subset of at most
/// `maxRows` rows of) the data, each scored by its leave-one-out relative
/// RMSE on every row of the subset (solve/ridge_loo.hpp), averaged over
/// outputs, at the best lambda of setLambdas(). Every trial draws its
/// parameters from the same seed, so two settings are compared on the same
/// random numbers. Several trials run at once on options.threads threads
/// (one trial per thread: the decomposition inside is serial); each result
/// depends on its settings alone, so the choices are the same for every
/// thread count. Trials report through options.progress with stage
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
        m_y = OutputScaler::fromData(m_y).apply(m_y);
        m_path = m_x.rows() <= autoExactTrialRows ? LeaveOneOutPath::features : LeaveOneOutPath::gram;
        m_trial = options;
        m_lambdas = {options.lambda};
        if (!m_trial.inputBox)  // scale as the full data will be scaled, not as the subset
            m_trial.inputBox = InputBox{inputs.colwise().minCoeff().transpose(),
                                        inputs.colwise().maxCoeff().transpose()};
    }

    /// The trial settings; change a field, then call score(). Only the
    /// frequency spread, width, features and input box are read.
    FitOptions& settings() { return m_trial; }

    /// Tikhonov weights each trial chooses from (default: options.lambda).
    void setLambdas(std::vector<double> lambdas) { m_lambdas = std::move(lambdas); }

    /// How trials are scored: through the features' singular values up to
    /// autoExactTrialRows rows, through the Gram matrix above (solve/ridge_loo.hpp).
    LeaveOneOutPath path() const { return m_path; }

    /// The lambda the last score() or best() chose: the strongest within one
    /// standard error of its lowest error (the score itself is the lowest error).
    double bestLambda() const { return m_bestLambda; }

    /// Leave-one-out error of a shallow fit with the current settings; +inf
    /// when the solve fails (such settings are then simply not chosen).
    double score()
    {
        const Outcome outcome = run({m_trial}).front();
        m_bestLambda = outcome.lambda;
        return outcome.error;
    }

    /// The scores of the current settings changed by set(settings, value),
    /// for every value of `values`, run side by side; the settings stay as they are.
    template <class T, class Set>
    std::vector<double> scores(const std::vector<T>& values, Set set)
    {
        std::vector<double> errors;
        for (const Outcome& outcome : run(candidates(values, set)))
            errors.push_back(outcome.error);
        return errors;
    }

    /// The value of `grid` with the lowest score after `set(value)`; leaves
    /// the settings at the best value. Ties keep the earlier value.
    template <class T, class Set>
    T best(const std::vector<T>& grid, Set set, double* bestError = nullptr)
    {
        const std::vector<Outcome> outcomes = run(candidates(grid, set));
        std::size_t chosen = 0;
        for (std::size_t i = 1; i < outcomes.size(); ++i)
            if (outcomes[i].error < outcomes[chosen].error)
                chosen = i;
        set(m_trial, grid[chosen]);
        m_bestLambda = outcomes[chosen].lambda;
        if (bestError)
            *bestError = outcomes[chosen].error;
        return grid[chosen];
    }

private:
    /// What GaussianSampler asks of a problem: parameter row lengths.
    struct Shape {
        Index inputs;
        Index parameterSize(const GroupShape& shape) const { return wavestack::parameterSize(shape.kind, inputs); }
    };
    struct Outcome {
        double error = std::numeric_limits<double>::infinity();
        double lambda = 0.0;
    };

    template <class T, class Set>
    std::vector<FitOptions> candidates(const std::vector<T>& values, Set set) const
    {
        std::vector<FitOptions> settings;
        for (const T& value : values) {
            settings.push_back(m_trial);
            set(settings.back(), value);
        }
        return settings;
    }

    /// Scores every entry of `settings`; progress is reported here, on the calling thread.
    std::vector<Outcome> run(const std::vector<FitOptions>& settings)
    {
        for (std::size_t i = 0; i < settings.size(); ++i) {
            const Index number = m_count++;
            const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - m_start).count();
            if (m_options.progress && !m_options.progress(FitProgress{"search", number, seconds, SamplerProgress(),
                                                                      -1.0, -1.0, TuneProgress()}))
                throw Cancelled("fit: cancelled by the progress callback (stage 'search', trial " +
                                std::to_string(number) + ")");
        }
        std::vector<Outcome> outcomes(settings.size());
        ThreadReduction(m_options.threads).run(Index(settings.size()), [&](Index t) {
            outcomes[std::size_t(t)] = scoreOne(settings[std::size_t(t)]);
        });
        return outcomes;
    }

    Outcome scoreOne(const FitOptions& trial) const
    {
        const Matrix u = InputScaler(*trial.inputBox).apply(m_x);
        Random random(trial.seed);
        const std::vector<FeatureGroup> groups =
            GaussianSampler(trial.frequencyStddev).sample(Shape{u.cols()}, groupShapes(trial.features, trial.width), random);
        Index count = 0;
        for (const auto& group : groups)
            count += group.featureCount();
        Matrix features(u.rows(), count);
        layerFeatures(groups, u, Matrix(u.rows(), 0), features);
        Outcome outcome{std::numeric_limits<double>::infinity(), m_lambdas.front()};
        try {
            const std::vector<LeaveOneOutError> errors = RidgeLeaveOneOut().errors(features, m_y, m_lambdas, m_path);
            outcome.error = errors[lowestError(errors)].relativeRmse;
            outcome.lambda = m_lambdas[oneStandardErrorChoice(errors, m_lambdas)];
        } catch (const NumericalError&) {
        }
        return outcome;
    }

    FitOptions m_options, m_trial;
    Matrix m_x, m_y;
    std::vector<double> m_lambdas;
    LeaveOneOutPath m_path = LeaveOneOutPath::features;
    double m_bestLambda = 0.0;
    std::chrono::steady_clock::time_point m_start;
    Index m_count = 0;
};

}  // namespace detail

/// The Gaussian frequency spread (FitOptions::frequencyStddev) with the
/// lowest leave-one-out relative RMSE, averaged over outputs, of shallow
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
