#pragma once
/// \file
/// Global fine-tuning: Adam (Kingma & Ba 2015) on every frequency, offset and
/// amplitude of a residual network at once, with the analytic gradient of
/// train/gradient.hpp, mini-batches, warm-up and cosine decay of the
/// learning rate, and the best parameters on held-out rows kept.

#include <algorithm>
#include <chrono>
#include <cmath>
#include <functional>
#include <optional>
#include <utility>
#include <vector>

#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/train/adam.hpp"
#include "wavestack/train/gradient.hpp"

namespace wavestack {

/// What the tuner reports after each epoch.
struct TuneProgress {
    Index epoch = 0;              ///< 0 is the network before tuning
    double trainingMse = 0.0;     ///< standardised units, data term only
    double validationMse = -1.0;  ///< the same on held-out rows; -1 without them
    double rate = 0.0;            ///< frequency learning rate at the end of the epoch
};

struct TuneOptions {
    /// Passes over the training rows; 0 disables tuning.
    Index epochs = 0;
    Index batchSize = 256;
    /// Learning rates after warm-up, for frequencies and ridge offsets and
    /// for amplitudes (separately settable; measured in DEVELOPERS.md). 3e-3
    /// was best of {1e-3, 3e-3, 1e-2} on the Si-front (1e-2 diverged there)
    /// and second best on an oblique ridge front.
    double frequencyRate = 3e-3;
    double amplitudeRate = 3e-3;
    /// Steps of linear warm-up from 0, then a cosine decay to
    /// finalRateFraction of the rate at the last step.
    Index warmupSteps = 100;
    double finalRateFraction = 0.05;
    /// Amplitude penalty lambda |b|^2 during tuning.
    double lambda = 0.0;
    /// Epochs without a lower held-out error before stopping; counted only
    /// in the second half of the schedule, so at least epochs / 2 run.
    Index patience = 20;
    /// Stop after the epoch that passes this time (unset: no limit), keeping
    /// the best parameters; the result then depends on the machine's speed.
    std::optional<std::chrono::steady_clock::time_point> deadline;
    AdamSettings adam;
    /// Called after each epoch; returning false stops tuning (the best
    /// parameters so far are kept; no exception).
    std::function<bool(const TuneProgress&)> progress;
};

namespace detail {

inline Index parameterCount(const std::vector<Layer>& layers)
{
    Index count = 0;
    for (const Layer& layer : layers) {
        for (const FeatureGroup& group : layer.groups)
            count += group.parameters.size();
        count += layer.amplitudes.size();
    }
    return count;
}

/// Visits every parameter matrix of `layers` and the matching gradient
/// matrix, frequencies first within each layer.
template <class Visit>
void forEachMatrix(std::vector<Layer>& layers, Visit&& visit)
{
    for (Layer& layer : layers) {
        for (FeatureGroup& group : layer.groups)
            visit(group.parameters, false);
        visit(layer.amplitudes, true);
    }
}

inline Vector flatten(std::vector<Layer>& layers)
{
    Vector flat(parameterCount(layers));
    Index at = 0;
    forEachMatrix(layers, [&](Matrix& a, bool) {
        flat.segment(at, a.size()) = Eigen::Map<const Vector>(a.data(), a.size());
        at += a.size();
    });
    return flat;
}

inline void unflatten(const Vector& flat, std::vector<Layer>& layers)
{
    Index at = 0;
    forEachMatrix(layers, [&](Matrix& a, bool) {
        Eigen::Map<Vector>(a.data(), a.size()) = flat.segment(at, a.size());
        at += a.size();
    });
}

/// Writes `gradient` into `flat` (sized like flatten's result).
inline void flattenGradient(const NetworkGradient& gradient, Vector& flat)
{
    Index at = 0;
    for (const auto& layer : gradient) {
        for (const auto& p : layer.parameters) {
            flat.segment(at, p.size()) = Eigen::Map<const Vector>(p.data(), p.size());
            at += p.size();
        }
        flat.segment(at, layer.amplitudes.size()) =
            Eigen::Map<const Vector>(layer.amplitudes.data(), layer.amplitudes.size());
        at += layer.amplitudes.size();
    }
}

/// Mean squared error (data term) of `layers` on (u, y), internal units.
inline double meanSquaredError(const std::vector<Layer>& layers, StateInput stateInput, const Matrix& u,
                               const Matrix& y)
{
    if (u.rows() == 0)
        return -1.0;
    // Identity scalers: the box [-1, 1] maps u to itself; mean 0, deviation 1.
    const Network net(InputScaler(InputBox{Vector::Constant(u.cols(), -1.0), Vector::Constant(u.cols(), 1.0)}),
                      OutputScaler(Vector::Zero(y.cols()), Vector::Ones(y.cols())), layers, stateInput);
    return (net.evaluateBatch(u) - y).squaredNorm() / double(y.size());
}

}  // namespace detail

/// Tunes `layers` on training rows (u, y) in internal units (scaled inputs,
/// standardised outputs) and returns the parameters with the lowest held-out
/// MSE (training MSE without held-out rows) among all epochs, the starting
/// point included: tuning never leaves the network worse on held-out rows.
template <class Reduction>
std::vector<Layer> tuneLayers(std::vector<Layer> layers, StateInput stateInput, const Matrix& u, const Matrix& y,
                              const Matrix& heldU, const Matrix& heldY, const TuneOptions& options, Random& random,
                              const Reduction& reduction)
{
    if (options.epochs <= 0)
        return layers;
    if (options.batchSize < 1 || options.warmupSteps < 0 || options.patience < 1)
        throw InvalidInput("tune: batchSize and patience must be >= 1 and warmupSteps >= 0");
    detail::requirePositive(options.frequencyRate, "tune: frequencyRate");
    detail::requirePositive(options.amplitudeRate, "tune: amplitudeRate");
    detail::requireNonNegative(options.lambda, "tune: lambda");

    const bool held = heldU.rows() > 0;
    auto score = [&](const std::vector<Layer>& candidate) {
        return held ? detail::meanSquaredError(candidate, stateInput, heldU, heldY)
                    : detail::meanSquaredError(candidate, stateInput, u, y);
    };
    std::vector<Layer> best = layers;
    double bestScore = score(layers);
    TuneProgress progress{0, detail::meanSquaredError(layers, stateInput, u, y),
                          held ? bestScore : -1.0, 0.0};
    if (options.progress && !options.progress(progress))
        return best;

    Vector flat = detail::flatten(layers);
    Vector baseRate(flat.size());
    {
        Index at = 0;
        detail::forEachMatrix(layers, [&](Matrix& a, bool amplitude) {
            baseRate.segment(at, a.size()).setConstant(amplitude ? options.amplitudeRate : options.frequencyRate);
            at += a.size();
        });
    }
    AdamOptimizer adam(flat.size(), options.adam);
    const Index n = u.rows();
    const Index batch = std::min(options.batchSize, n);
    const Index batchesPerEpoch = (n + batch - 1) / batch;
    const double totalSteps = double(options.epochs * batchesPerEpoch);
    std::vector<Index> order(static_cast<std::size_t>(n));
    for (Index i = 0; i < n; ++i)
        order[std::size_t(i)] = i;
    NetworkGradient gradient;
    GradientWorkspace workspace;
    Vector flatGradient(flat.size()), rate(flat.size());
    Matrix batchU(batch, u.cols()), batchY(batch, y.cols());
    Index sinceBest = 0;
    double rateFactor = 0.0;

    for (Index epoch = 1; epoch <= options.epochs; ++epoch) {
        for (Index i = n - 1; i > 0; --i)  // seeded Fisher-Yates shuffle
            std::swap(order[std::size_t(i)], order[std::size_t(random.nextBits() % std::uint64_t(i + 1))]);
        for (Index b = 0; b < batchesPerEpoch; ++b) {
            const Index begin = b * batch, size = std::min(batch, n - begin);
            batchU.resize(size, u.cols());
            batchY.resize(size, y.cols());
            for (Index i = 0; i < size; ++i) {
                batchU.row(i) = u.row(order[std::size_t(begin + i)]);
                batchY.row(i) = y.row(order[std::size_t(begin + i)]);
            }
            lossAndGradient(layers, stateInput, batchU, batchY, options.lambda, gradient, reduction, workspace);
            const double step = double(adam.steps());
            const double warm = options.warmupSteps > 0 ? std::min(1.0, (step + 1.0) / double(options.warmupSteps))
                                                        : 1.0;
            const double decay = options.finalRateFraction + (1.0 - options.finalRateFraction) * 0.5 *
                                                                 (1.0 + std::cos(3.141592653589793 * step / totalSteps));
            rateFactor = warm * decay;
            detail::flattenGradient(gradient, flatGradient);
            rate = rateFactor * baseRate;
            adam.step(flat, flatGradient, rate);
            detail::unflatten(flat, layers);
        }
        const double current = score(layers);
        progress = TuneProgress{epoch, held ? detail::meanSquaredError(layers, stateInput, u, y) : current,
                                held ? current : -1.0, rateFactor * options.frequencyRate};
        if (std::isfinite(current) && current < bestScore) {
            bestScore = current;
            best = layers;
            sinceBest = 0;
        } else if (++sinceBest >= options.patience && 2 * epoch > options.epochs) {
            // Only in the second half of the schedule, where the cosine decay
            // has brought the rate below about half its peak: before that the
            // held-out error is noisy (Si-front d = 3, patience 40 of 1 000
            // epochs: stopped at epoch 69 with 0.117; counted from half way,
            // epoch 597 with 0.040; the whole schedule 0.033).
            if (options.progress)
                options.progress(progress);
            break;
        }
        if (options.progress && !options.progress(progress))
            break;
        if (options.deadline && std::chrono::steady_clock::now() > *options.deadline)
            break;
    }
    return best;
}

}  // namespace wavestack
