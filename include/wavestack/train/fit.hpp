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
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/model/scaler.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/sampling/gaussian_sampler.hpp"
#include "wavestack/sampling/metropolis_sampler.hpp"
#include "wavestack/solve/ridge_solver.hpp"
#include "wavestack/train/layer_problem.hpp"

namespace wavestack {

/// Which feature maps a layer uses.
enum class FeatureMix {
    fourier,  ///< Fourier pairs only
    ridge,    ///< tanh ridge features only
    both,     ///< half the width each: Fourier for smooth parts, ridge for fronts
};

/// Where frequencies come from in the built-in samplers.
enum class SamplerKind { gaussian, metropolis };

/// What a progress callback is told during training.
struct FitProgress {
    std::string stage;             ///< "sampling" (once per sampler iteration), then "amplitudes"
    double seconds = 0.0;          ///< wall time since fit started
    SamplerProgress sampler;       ///< the sampler's last report (stage "sampling")
    double trainingRmse = -1.0;    ///< standardised output units; -1 until known
};

struct FitOptions {
    /// Parameter rows (frequencies, ridge directions) of the layer, over all groups.
    Index width = 256;
    FeatureMix features = FeatureMix::fourier;
    /// Tikhonov weight in (1/N)|Phi b - y|^2 + lambda |b|^2, outputs standardised.
    /// Fourier features have mean squared value 1/2, so lambda is relative to
    /// the Gram matrix's diagonal within a factor of two.
    double lambda = 1e-8;
    SamplerKind sampler = SamplerKind::gaussian;
    /// Standard deviation of Gaussian frequencies (and of the Metropolis
    /// chain's initial draw), inputs scaled to [-1, 1].
    double frequencyStddev = GaussianSampler::defaultStddev;
    /// Chain settings when sampler == metropolis (initialStddev is taken from frequencyStddev).
    MetropolisSettings metropolis;
    /// Fraction of rows held out to choose between sampler snapshots; the
    /// final amplitudes are solved on all rows. 0 disables the split.
    double validationFraction = 0.0;
    /// Seed of every random choice; same seed and data give the same model,
    /// bit for bit, for every thread count.
    std::uint64_t seed = 1;
    /// Worker threads for feature and Gram assembly.
    Index threads = 1;
    /// Box mapped to [-1, 1]^d; the training data's bounding box when empty.
    std::optional<InputBox> inputBox;
    /// Called during training; return false to stop (fit then throws Cancelled).
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
    if (!(options.validationFraction >= 0.0 && options.validationFraction < 1.0))
        throw InvalidInput("fit: validationFraction must lie in [0, 1), got " +
                           std::to_string(options.validationFraction));
    // d + 1 training points are the fewest that can pin down an affine trend in d inputs.
    const Index needed = std::max<Index>(2, inputs.cols() + 1);
    const auto held = static_cast<Index>(std::ceil(options.validationFraction * double(inputs.rows())));
    if (inputs.rows() - held < needed)
        throw InvalidInput("fit: " + std::to_string(inputs.rows()) + " rows given" +
                           (held > 0 ? " (" + std::to_string(held) + " held out)" : std::string()) +
                           ", at least " + std::to_string(needed) + " training rows are needed for " +
                           std::to_string(inputs.cols()) + " inputs");
    if (options.width <= 0)
        throw InvalidInput("fit: width must be at least 1, got " + std::to_string(options.width));
    if (options.features == FeatureMix::both && options.width < 2)
        throw InvalidInput("fit: width must be at least 2 when both feature maps are used");
    requireNonNegative(options.lambda, "fit: lambda");
    requireFinite(inputs, "fit: inputs");
    requireFinite(outputs, "fit: outputs");
    if (options.inputBox && options.inputBox->lower.size() != inputs.cols())
        throw InvalidInput("fit: the input box has " + std::to_string(options.inputBox->lower.size()) +
                           " entries but the data have " + std::to_string(inputs.cols()) + " inputs");
}

inline std::vector<GroupShape> groupShapes(FeatureMix mix, Index width)
{
    switch (mix) {
    case FeatureMix::fourier:
        return {{FeatureKind::fourier, width}};
    case FeatureMix::ridge:
        return {{FeatureKind::ridge, width}};
    default:
        return {{FeatureKind::fourier, width / 2}, {FeatureKind::ridge, width - width / 2}};
    }
}

/// Seeded permutation of 0..n-1 (Fisher-Yates).
inline std::vector<Index> shuffledRows(Index n, Random& random)
{
    std::vector<Index> order(static_cast<std::size_t>(n));
    for (Index i = 0; i < n; ++i)
        order[static_cast<std::size_t>(i)] = i;
    for (Index i = n - 1; i > 0; --i)
        std::swap(order[static_cast<std::size_t>(i)],
                  order[static_cast<std::size_t>(random.nextBits() % static_cast<std::uint64_t>(i + 1))]);
    return order;
}

inline Matrix selectRows(const Matrix& data, const std::vector<Index>& rows, Index begin, Index end)
{
    Matrix selected(end - begin, data.cols());
    for (Index i = begin; i < end; ++i)
        selected.row(i - begin) = data.row(rows[static_cast<std::size_t>(i)]);
    return selected;
}

}  // namespace detail

/// Fits a shallow network to N samples: inputs N x d, outputs N x m (rows =
/// points). Parameter rows come from `sampler` (the sampler contract is in
/// sampling/gaussian_sampler.hpp); amplitudes are the ridge solution for all
/// outputs at once.
template <class Sampler>
Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options, const Sampler& sampler)
{
    detail::checkTrainingData(inputs, outputs, options);
    const auto start = std::chrono::steady_clock::now();
    auto report = [&](FitProgress progress) {
        if (!options.progress)
            return true;
        progress.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        return options.progress(progress);
    };

    InputScaler inputScaler = options.inputBox ? InputScaler(*options.inputBox) : InputScaler::fromData(inputs);
    OutputScaler outputScaler = OutputScaler::fromData(outputs);
    const Matrix scaledInputs = inputScaler.apply(inputs);
    const Matrix targets = outputScaler.apply(outputs);
    Random random(options.seed);

    using Solver = RidgeSolver<ThreadReduction>;
    const Solver solver(RidgeSettings(), ThreadReduction(options.threads));
    const Index points = inputs.rows();
    const auto held = static_cast<Index>(std::ceil(options.validationFraction * double(points)));
    std::optional<LayerProblem<Solver>> problem;
    if (held > 0) {
        const std::vector<Index> order = detail::shuffledRows(points, random);
        problem.emplace(detail::selectRows(scaledInputs, order, held, points),
                        detail::selectRows(targets, order, held, points), options.lambda, solver);
        problem->setValidation(detail::selectRows(scaledInputs, order, 0, held),
                               detail::selectRows(targets, order, 0, held));
    } else {
        problem.emplace(scaledInputs, targets, options.lambda, solver);
    }
    problem->setProgress([&](const SamplerProgress& s) { return report(FitProgress{"sampling", 0.0, s, s.trainingRmse}); });

    Layer layer;
    layer.groups = sampler.sample(*problem, detail::groupShapes(options.features, options.width), random);
    double trainingRmse = -1.0;
    if (held > 0) {
        // The held-out rows chose the parameters; the amplitudes use every row.
        LayerProblem<Solver> all(scaledInputs, targets, options.lambda, solver);
        all.solve(layer.groups);
        layer.amplitudes = all.amplitudes();
        trainingRmse = all.trainingRmse();
    } else {
        problem->solve(layer.groups);  // samplers need not leave their last solve on these rows
        layer.amplitudes = problem->amplitudes();
        trainingRmse = problem->trainingRmse();
    }
    if (!report(FitProgress{"amplitudes", 0.0, SamplerProgress(), trainingRmse}))
        throw Cancelled("fit: cancelled by the progress callback after the final solve");
    return Network(std::move(inputScaler), std::move(outputScaler), std::move(layer));
}

/// Fits with the built-in sampler that options.sampler names.
inline Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options = {})
{
    if (options.sampler == SamplerKind::metropolis) {
        MetropolisSettings settings = options.metropolis;
        settings.initialStddev = options.frequencyStddev;
        return fit(inputs, outputs, options, MetropolisSampler(settings));
    }
    return fit(inputs, outputs, options, GaussianSampler(options.frequencyStddev));
}

}  // namespace wavestack
