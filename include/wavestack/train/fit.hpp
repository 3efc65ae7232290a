#pragma once
/// \file
/// `fit`: samples of a function in, trained surrogate out.

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <functional>
#include <optional>
#include <string>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/fourier_map.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/model/scaler.hpp"
#include "wavestack/sampling/gaussian_sampler.hpp"
#include "wavestack/solve/ridge_solver.hpp"

namespace wavestack {

/// What a progress callback is told after each stage of training.
struct FitProgress {
    std::string stage;           ///< "frequencies", "features", "amplitudes"
    double seconds = 0.0;        ///< wall time since fit started
    double trainingRmse = -1.0;  ///< RMSE on the training data in standardised output units; -1 until known
};

struct FitOptions {
    /// K, the number of frequencies (the layer has 2K features).
    Index width = 256;
    /// Tikhonov weight in (1/N)|Phi b - y|^2 + lambda |b|^2, outputs standardised.
    /// Fourier features have mean squared value 1/2, so this is relative to the
    /// Gram matrix's diagonal within a factor of two.
    double lambda = 1e-8;
    /// Standard deviation of the Gaussian frequency sampler, inputs scaled to
    /// [-1, 1]; used by the overload of fit() that builds the sampler itself.
    double frequencyStddev = GaussianSampler::defaultStddev;
    /// Seed of every random choice; same seed and data give the same model.
    std::uint64_t seed = 1;
    /// Box mapped to [-1, 1]^d; the training data's bounding box when empty.
    std::optional<InputBox> inputBox;
    /// Called after each stage; return false to stop training (fit then throws Cancelled).
    std::function<bool(const FitProgress&)> progress;
};

namespace detail {

inline void checkTrainingData(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options)
{
    if (inputs.rows() != outputs.rows())
        throw InvalidInput("fit: inputs have " + std::to_string(inputs.rows()) + " rows but outputs have " +
                           std::to_string(outputs.rows()) + "; rows are points and must match");
    if (inputs.cols() == 0 || outputs.cols() == 0)
        throw InvalidInput("fit: need at least one input column and one output column, got " +
                           std::to_string(inputs.cols()) + " and " + std::to_string(outputs.cols()));
    // d + 1 points are the fewest that can pin down an affine trend in d inputs.
    const Index needed = std::max<Index>(2, inputs.cols() + 1);
    if (inputs.rows() < needed)
        throw InvalidInput("fit: " + std::to_string(inputs.rows()) + " rows given, at least " +
                           std::to_string(needed) + " are needed for " + std::to_string(inputs.cols()) + " inputs");
    if (options.width <= 0)
        throw InvalidInput("fit: width must be at least 1, got " + std::to_string(options.width));
    requireNonNegative(options.lambda, "fit: lambda");
    requireFinite(inputs, "fit: inputs");
    requireFinite(outputs, "fit: outputs");
    if (options.inputBox && options.inputBox->lower.size() != inputs.cols())
        throw InvalidInput("fit: the input box has " + std::to_string(options.inputBox->lower.size()) +
                           " entries but the data have " + std::to_string(inputs.cols()) + " inputs");
}

}  // namespace detail

/// Fits a shallow random-Fourier-feature network to N samples: inputs N x d,
/// outputs N x m (rows = points). Frequencies come from `sampler` (see the
/// sampler contract in sampling/gaussian_sampler.hpp); amplitudes are the
/// ridge solution for all outputs at once.
template <class FrequencySampler>
Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options,
            const FrequencySampler& sampler)
{
    detail::checkTrainingData(inputs, outputs, options);
    const auto start = std::chrono::steady_clock::now();
    auto report = [&](const char* stage, double trainingRmse) {
        if (!options.progress)
            return;
        const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        if (!options.progress(FitProgress{stage, seconds, trainingRmse}))
            throw Cancelled(std::string("fit: cancelled by the progress callback after stage '") + stage + "'");
    };

    InputScaler inputScaler = options.inputBox ? InputScaler(*options.inputBox) : InputScaler::fromData(inputs);
    OutputScaler outputScaler = OutputScaler::fromData(outputs);
    const Matrix scaledInputs = inputScaler.apply(inputs);
    const Matrix targets = outputScaler.apply(outputs);

    Random random(options.seed);
    FourierLayer layer;
    layer.frequencies = sampler.draw(options.width, FourierMap::parameterSize(inputs.cols()), random);
    report("frequencies", -1.0);

    Matrix features(inputs.rows(), FourierMap::featuresPerParameter * options.width);
    FourierMap::features(scaledInputs, layer.frequencies, features);
    report("features", -1.0);

    RidgeSolver solver;
    solver.solve(features, targets, options.lambda, layer.amplitudes);
    const double trainingRmse = std::sqrt((features * layer.amplitudes - targets).squaredNorm() /
                                          static_cast<double>(targets.size()));
    report("amplitudes", trainingRmse);
    return Network(std::move(inputScaler), std::move(outputScaler), std::move(layer));
}

/// Fits with Gaussian frequencies of standard deviation options.frequencyStddev.
inline Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options = {})
{
    return fit(inputs, outputs, options, GaussianSampler(options.frequencyStddev));
}

}  // namespace wavestack
