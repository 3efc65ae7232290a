#pragma once
/// \file
/// `fit`: samples of a function in, trained surrogate out.

#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <functional>
#include <optional>
#include <sstream>
#include <type_traits>
#include <string>
#include <utility>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/check/metrics.hpp"
#include "wavestack/model/domain.hpp"
#include "wavestack/model/network.hpp"
#include "wavestack/model/record.hpp"
#include "wavestack/model/scaler.hpp"
#include "wavestack/parallel/reduction.hpp"
#include "wavestack/sampling/gaussian_sampler.hpp"
#include "wavestack/sampling/metropolis_sampler.hpp"
#include "wavestack/solve/ridge_solver.hpp"
#include "wavestack/train/layer_problem.hpp"
#include "wavestack/train/tune.hpp"

namespace wavestack {

/// Which feature maps a layer uses.
enum class FeatureMix {
    fourier,  ///< Fourier pairs only
    ridge,    ///< tanh ridge features only
    both,     ///< half the width each: Fourier for smooth parts, ridge for fronts
};

/// How the network's parameters start before optional Adam tuning.
enum class Initialization {
    layerByLayer,  ///< sampled and solved layer by layer on the residuals (boosting)
    glorot,        ///< Glorot & Bengio 2010 uniform, the usual start for training by Adam alone
};

/// Where frequencies come from in the built-in samplers.
enum class SamplerKind { gaussian, metropolis };

/// What a progress callback is told during training.
struct FitProgress {
    /// "sampling": once per sampler iteration of a layer; "layer": a layer
    /// was added; "dropped": a layer would have raised the training error
    /// (numerical trouble) and was left out; "stopped": the held-out error
    /// stopped improving and later layers were not trained; "tuning": once
    /// per Adam epoch (see `tuning`); "search": a trial fit of
    /// chooseFrequencyStddev (train/auto_settings.hpp), `layer` = trial index;
    /// "compact": any report of autoFit's compact network tuned by Adam
    /// (its step 9); "refit": any report of autoFit's final fit on every row.
    std::string stage;
    Index layer = 0;               ///< 0 is the initial layer
    double seconds = 0.0;          ///< wall time since fit started
    SamplerProgress sampler;       ///< the sampler's last report (stage "sampling")
    double trainingRmse = -1.0;    ///< network so far, training rows, standardised units
    double validationRmse = -1.0;  ///< the same on the held-out rows; -1 without a split
    TuneProgress tuning;           ///< the tuner's last report (stage "tuning")
};

struct FitOptions {
    /// Parameter rows (frequencies, ridge directions) reading the inputs, per
    /// layer, over its input groups.
    Index width = 256;
    FeatureMix features = FeatureMix::fourier;
    /// Tikhonov weight in (1/N)|Phi b - y|^2 + lambda |b|^2, outputs standardised.
    /// Fourier features have mean squared value 1/2, so lambda is relative to
    /// the Gram matrix's diagonal within a factor of two.
    double lambda = 1e-8;
    /// Per-layer lambda (index 0 is the initial layer); layers past its end use `lambda`.
    std::vector<double> layerLambda;
    /// Residual layers after the initial one; 0 gives a shallow network.
    Index layers = 0;
    /// Parameter rows of each residual layer's state group (Fourier features
    /// of the state); 0 selects max(1, width / 4).
    Index stateWidth = 0;
    /// What the state groups read; see StateInput and DEVELOPERS.md for the evidence.
    StateInput stateInput = StateInput::runningPrediction;
    /// With a validation split: stop after this many residual layers without
    /// a lower held-out error, and keep the best prefix of layers.
    Index patience = 2;
    SamplerKind sampler = SamplerKind::gaussian;
    /// Standard deviation of Gaussian frequencies (and of the Metropolis
    /// chain's initial draw), inputs scaled to [-1, 1].
    double frequencyStddev = GaussianSampler::defaultStddev;
    /// Chain settings when sampler == metropolis: initialStddev is taken from
    /// frequencyStddev, and step and maxStep, given for the default spread,
    /// are scaled by frequencyStddev / GaussianSampler::defaultStddev.
    MetropolisSettings metropolis;
    /// Fraction of rows held out to choose between sampler snapshots and to
    /// stop adding layers; held-out rows are never used to solve amplitudes.
    /// 0 disables the split.
    double validationFraction = 0.0;
    /// Seed of every random choice; same seed and data give the same model,
    /// bit for bit, for every thread count.
    std::uint64_t seed = 1;
    /// Worker threads for feature and Gram assembly.
    Index threads = 1;
    /// Box mapped to [-1, 1]^d; the training data's bounding box when empty.
    std::optional<InputBox> inputBox;
    /// Layer-by-layer training (the default) or Glorot initialisation; the
    /// latter only makes sense with tune.epochs > 0.
    Initialization initialization = Initialization::layerByLayer;
    /// Global fine-tuning by Adam after the layers are built (off by default).
    TuneOptions tune;
    /// No residual layer is started, and tuning stops, after this time
    /// (unset: no limit). The layers and epochs done so far are kept; the
    /// result then depends on the machine's speed.
    std::optional<std::chrono::steady_clock::time_point> deadline;
    /// Names stored with the model (empty: x0, x1, ... and y0, y1, ...).
    std::vector<std::string> inputNames, outputNames;
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
    for (double lambda : options.layerLambda)
        requireNonNegative(lambda, "fit: layerLambda");
    if (options.layers < 0 || options.stateWidth < 0 || options.patience < 1)
        throw InvalidInput("fit: layers and stateWidth must be >= 0 and patience >= 1, got " +
                           std::to_string(options.layers) + ", " + std::to_string(options.stateWidth) + ", " +
                           std::to_string(options.patience));
    requireFinite(inputs, "fit: inputs");
    requireFinite(outputs, "fit: outputs");
    if ((!options.inputNames.empty() && Index(options.inputNames.size()) != inputs.cols()) ||
        (!options.outputNames.empty() && Index(options.outputNames.size()) != outputs.cols()))
        throw InvalidInput("fit: " + std::to_string(options.inputNames.size()) + " input names and " +
                           std::to_string(options.outputNames.size()) + " output names for " +
                           std::to_string(inputs.cols()) + " inputs and " + std::to_string(outputs.cols()) +
                           " outputs");
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

template <class Sampler>
std::string describeSettings(const FitOptions& options, Index stateWidth, const Sampler&)
{
    std::ostringstream text;
    text.precision(12);  // for people; 0.2 prints as 0.2, not 0.20000000000000001
    const char* mix = options.features == FeatureMix::fourier ? "fourier"
                      : options.features == FeatureMix::ridge ? "ridge"
                                                              : "both";
    text << "width = " << options.width << "\nfeatures = " << mix << "\nlambda = " << options.lambda
         << "\nlayers = " << options.layers << "\nstate width = " << stateWidth
         << "\nstate input = " << stateInputName(options.stateInput) << "\nsampler = "
         << (std::is_same_v<Sampler, MetropolisSampler> ? "metropolis"
             : std::is_same_v<Sampler, GaussianSampler> ? "gaussian"
                                                        : "custom")
         << "\ninitialization = " << (options.initialization == Initialization::glorot ? "glorot" : "layer-by-layer")
         << "\ntune epochs = " << options.tune.epochs << "\ntune rates (frequency, amplitude) = "
         << options.tune.frequencyRate << ", " << options.tune.amplitudeRate << "\ntune batch = "
         << options.tune.batchSize << "\nfrequency stddev = " << options.frequencyStddev << "\nvalidation fraction = "
         << options.validationFraction << "\nseed = " << options.seed << "\n";
    if (std::is_same_v<Sampler, MetropolisSampler>)
        text << "metropolis iterations = " << options.metropolis.iterations << "\nmetropolis lambda = "
             << options.metropolis.lambda << "\nmetropolis step cap = " << options.metropolis.maxStep
             << "\nmetropolis resampling = " << (options.metropolis.resample ? "on" : "off") << "\n";
    return text.str();
}

/// Layers of the shape layer-by-layer training would build, with Glorot &
/// Bengio (2010) uniform parameters: U(-a, a), a = sqrt(6 / (fan in + fan
/// out)); ridge offsets start at 0.
inline std::vector<Layer> glorotLayers(const FitOptions& options, Index d, Index m, Index stateWidth, Random& random)
{
    auto uniform = [&](Matrix& a, double limit) {
        for (Index i = 0; i < a.size(); ++i)
            a.data()[i] = limit * (2.0 * random.uniform() - 1.0);
    };
    std::vector<Layer> layers;
    for (Index l = 0; l <= options.layers; ++l) {
        std::vector<GroupShape> shapes = groupShapes(options.features, options.width);
        if (l > 0)
            shapes.push_back(GroupShape{FeatureKind::fourier, stateWidth, FeatureSource::state});
        Layer layer;
        for (const GroupShape& shape : shapes) {
            const Index source = shape.source == FeatureSource::input ? d : m;
            FeatureGroup group{shape.kind, Matrix(shape.width, parameterSize(shape.kind, source)), shape.source};
            uniform(group.parameters, std::sqrt(6.0 / double(source + shape.width)));
            if (group.parameters.cols() > source)
                group.parameters.col(source).setZero();
            layer.groups.push_back(std::move(group));
        }
        layer.amplitudes.resize(layer.featureCount(), m);
        uniform(layer.amplitudes, std::sqrt(6.0 / double(layer.featureCount() + m)));
        layers.push_back(std::move(layer));
    }
    return layers;
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

/// fit's split into held-out and training rows: rows order[0, held) are
/// held out, the rest train. Without held-out rows `random` is not used.
struct RowSplit {
    std::vector<Index> order;
    Index held = 0;
};

inline RowSplit splitRows(Index points, double validationFraction, Random& random)
{
    RowSplit split;
    split.held = static_cast<Index>(std::ceil(validationFraction * double(points)));
    if (split.held > 0)
        split.order = shuffledRows(points, random);
    return split;
}

/// The split fit(inputs, outputs, options) makes for options.seed: its first random draws.
inline RowSplit splitRows(Index points, double validationFraction, std::uint64_t seed)
{
    Random random(seed);
    return splitRows(points, validationFraction, random);
}

}  // namespace detail

/// Fits a network to N samples: inputs N x d, outputs N x m (rows = points).
///
/// The initial layer is fitted to the outputs; each residual layer is then
/// fitted to what the layers before it left unexplained (boosting), reading
/// the inputs and the network's state. Each layer's parameter rows come from
/// its own run of `sampler` (contract in sampling/gaussian_sampler.hpp); its
/// amplitudes are the ridge solution for all outputs at once. A layer's
/// problem is convex in its amplitudes, so the training error cannot rise
/// with depth; a layer that would raise it (numerical trouble) is dropped.
template <class Sampler>
Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options, const Sampler& sampler)
{
    detail::checkTrainingData(inputs, outputs, options);
    const auto start = std::chrono::steady_clock::now();
    auto report = [&](FitProgress progress) {
        progress.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
        if (options.progress && !options.progress(progress))
            throw Cancelled("fit: cancelled by the progress callback (stage '" + progress.stage + "', layer " +
                            std::to_string(progress.layer) + ")");
    };

    InputScaler inputScaler = options.inputBox ? InputScaler(*options.inputBox) : InputScaler::fromData(inputs);
    OutputScaler outputScaler = OutputScaler::fromData(outputs);
    const Matrix scaledInputs = inputScaler.apply(inputs);
    const Matrix scaledOutputs = outputScaler.apply(outputs);
    Random random(options.seed);

    // Training and held-out rows.
    const Index points = inputs.rows();
    const detail::RowSplit split = detail::splitRows(points, options.validationFraction, random);
    const Index held = split.held;
    Matrix u = scaledInputs, y = scaledOutputs, heldU(0, inputs.cols()), heldY(0, outputs.cols());
    if (held > 0) {
        u = detail::selectRows(scaledInputs, split.order, held, points);
        y = detail::selectRows(scaledOutputs, split.order, held, points);
        heldU = detail::selectRows(scaledInputs, split.order, 0, held);
        heldY = detail::selectRows(scaledOutputs, split.order, 0, held);
    }
    auto rmse = [](const Matrix& residual) {
        return residual.size() > 0 ? std::sqrt(residual.squaredNorm() / double(residual.size())) : -1.0;
    };

    using Solver = RidgeSolver<ThreadReduction>;
    const Solver solver(RidgeSettings::fastTraining(), ThreadReduction(options.threads));
    const Index m = outputs.cols();
    Matrix initial = Matrix::Zero(u.rows(), m), heldInitial = Matrix::Zero(held, m);   // f0
    Matrix residual = Matrix::Zero(u.rows(), m), heldResidual = Matrix::Zero(held, m); // z
    std::vector<Layer> layers;
    std::vector<TrainingStep> history;
    double trainingError = rmse(y), bestHeldError = rmse(heldY);
    std::size_t bestCount = 1;
    const Index stateWidth = options.stateWidth > 0 ? options.stateWidth : std::max<Index>(1, options.width / 4);

    for (Index l = 0; options.initialization == Initialization::layerByLayer && l <= options.layers; ++l) {
        if (l > 0 && options.deadline && std::chrono::steady_clock::now() > *options.deadline) {
            report(FitProgress{"stopped", l - 1, 0.0, SamplerProgress(), trainingError, -1.0, TuneProgress()});
            break;
        }
        const double lambda = l < Index(options.layerLambda.size()) ? options.layerLambda[std::size_t(l)]
                                                                     : options.lambda;
        // What the earlier layers left unexplained, and the state the layer reads.
        LayerProblem<Solver> problem(u, y - initial - residual, lambda, solver);
        std::vector<GroupShape> shapes = detail::groupShapes(options.features, options.width);
        if (held > 0)
            problem.setValidation(heldU, heldY - heldInitial - heldResidual);
        if (l > 0) {
            const bool prediction = options.stateInput == StateInput::runningPrediction;
            problem.setState(prediction ? Matrix(initial + residual) : residual,
                             prediction ? Matrix(heldInitial + heldResidual) : heldResidual);
            shapes.push_back(GroupShape{FeatureKind::fourier, stateWidth, FeatureSource::state});
        }
        problem.setIntercept(true);
        problem.setProgress([&](const SamplerProgress& s) {
            report(FitProgress{"sampling", l, 0.0, s, s.trainingRmse, s.validationRmse, TuneProgress()});
            return true;
        });

        Layer layer;
        layer.groups = sampler.sample(problem, shapes, random);
        problem.solve(layer.groups);  // the layer's own lambda; samplers may have solved with another
        layer.amplitudes = problem.amplitudes();
        const Matrix& fitted = problem.fitted();
        Matrix& target = l == 0 ? initial : residual;
        const double error = rmse(y - initial - residual - fitted);
        if (l > 0 && !(error <= trainingError)) {
            report(FitProgress{"dropped", l, 0.0, SamplerProgress(), error, -1.0, TuneProgress()});
            continue;
        }
        target += fitted;
        if (held > 0)
            (l == 0 ? heldInitial : heldResidual) += problem.validationFitted(layer.groups);
        layer.groups.push_back(problem.interceptGroup());  // after the held-out fit, which adds it itself
        trainingError = error;
        layers.push_back(std::move(layer));
        const double heldError = rmse(heldY - heldInitial - heldResidual);
        history.push_back(TrainingStep{l, trainingError, heldError});
        report(FitProgress{"layer", l, 0.0, SamplerProgress(), trainingError, heldError, TuneProgress()});

        if (held > 0) {
            if (l == 0 || heldError < bestHeldError) {
                bestHeldError = heldError;
                bestCount = layers.size();
            } else if (layers.size() - bestCount >= std::size_t(options.patience)) {
                report(FitProgress{"stopped", l, 0.0, SamplerProgress(), trainingError, heldError, TuneProgress()});
                break;
            }
        }
    }
    if (held > 0 && options.initialization == Initialization::layerByLayer) {
        layers.resize(bestCount);  // the best prefix on held-out rows
        history.resize(bestCount);
    }
    if (options.initialization == Initialization::glorot)
        layers = detail::glorotLayers(options, u.cols(), m, stateWidth, random);
    std::vector<TuningStep> tuningHistory;
    if (options.tune.epochs > 0) {
        TuneOptions tuning = options.tune;
        if (options.deadline && (!tuning.deadline || *options.deadline < *tuning.deadline))
            tuning.deadline = options.deadline;
        tuning.progress = [&](const TuneProgress& t) {
            tuningHistory.push_back(TuningStep{t.epoch, std::sqrt(t.trainingMse),
                                               t.validationMse >= 0.0 ? std::sqrt(t.validationMse) : -1.0});
            FitProgress progress{"tuning", Index(layers.size()) - 1, 0.0, SamplerProgress(), std::sqrt(t.trainingMse),
                                 t.validationMse >= 0.0 ? std::sqrt(t.validationMse) : -1.0, t};
            report(progress);
            return true;
        };
        layers = tuneLayers(std::move(layers), options.stateInput, u, y, heldU, heldY, tuning, random,
                            ThreadReduction(options.threads));
    }
    Network network(std::move(inputScaler), std::move(outputScaler), std::move(layers), options.stateInput);
    network.setDomain(TrainingDomain::fromData(inputs));
    ModelRecord record;
    record.inputNames = options.inputNames;
    record.outputNames = options.outputNames;
    record.settings = detail::describeSettings(options, stateWidth, sampler);
    record.history = std::move(history);
    record.tuningHistory = std::move(tuningHistory);
    if (held > 0) {
        // Back in the user's units: unscale the held-out rows.
        const Matrix heldInputs = (heldU.rowwise() - network.inputScaler().offset().transpose()) *
                                  network.inputScaler().scale().cwiseInverse().asDiagonal();
        const Matrix heldOutputs = (heldY * network.outputScaler().deviation().asDiagonal()).rowwise() +
                                   network.outputScaler().mean().transpose();
        record.heldOutMetrics = measureColumnErrors(network.evaluateBatch(heldInputs), heldOutputs);
    }
    record.fitSeconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    network.setRecord(std::move(record));
    return network;
}

/// Fits with the built-in sampler that options.sampler names.
inline Network fit(const MatrixView& inputs, const MatrixView& outputs, const FitOptions& options = {})
{
    if (options.sampler == SamplerKind::metropolis) {
        // Steps are set for the default spread and scale with the chosen one:
        // an absolute step of 0.5 on frequencies drawn with spread 0.03
        // threw every row far out of the target's band, and the chain then
        // fitted noise (wing weight, N = 1 000: held-out error 100x up in 10
        // iterations).
        MetropolisSettings settings = options.metropolis;
        const double spread = options.frequencyStddev / GaussianSampler::defaultStddev;
        settings.initialStddev = options.frequencyStddev;
        settings.step *= spread;
        settings.maxStep *= spread;
        return fit(inputs, outputs, options, MetropolisSampler(settings));
    }
    return fit(inputs, outputs, options, GaussianSampler(options.frequencyStddev));
}

}  // namespace wavestack
