#pragma once
/// \file
/// `autoFit`: `fit` with the settings chosen from the data. Every setting the
/// caller leaves unset is chosen on the held-out rows, in this order, each
/// step keeping the earlier choices:
///
///   1. width per layer from the number of training rows (autoWidth);
///   2. the frequency spread, over frequencyStddevGrid() (shallow trials);
///   3. lambda, over autoLambdaGrid() (shallow trials);
///   4. a spread per input (anisotropy, like a kernel with one length scale
///      per input): passes over the inputs, multiplying one input's spread
///      by 1/4, 1/2, 2 or 4 where that lowers the held-out error by 3 %,
///      until a pass changes nothing (at most autoScalePasses), then the
///      common spread once more (shallow trials);
///   5. the feature mix: Fourier alone or Fourier + ridge (shallow trials);
///   6. the number of residual layers: up to autoMaxLayers, early-stopped
///      when the held-out error stops falling (the best prefix is kept);
///   7. Adam tuning: up to autoTuneEpochsFor() epochs, kept only as far as
///      it lowers the held-out error (the tuner keeps its best epoch, which
///      is epoch 0, the untuned network, when tuning does not pay).
///
/// Shallow trials use at most 4 000 rows and width autoTrialWidth, so steps
/// 2-5 cost about 30 small solves plus 4 d per pass of step 4. The evidence
/// for each rule is in DEVELOPERS.md ("Defaults") and bench/results/suite.md.

#include <algorithm>
#include <chrono>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "wavestack/core/types.hpp"
#include "wavestack/train/auto_settings.hpp"
#include "wavestack/train/fit.hpp"

namespace wavestack {

struct AutoFitOptions {
    /// Unset: chosen automatically (see the file comment).
    std::optional<Index> width, layers, tuneEpochs;
    std::optional<double> lambda, frequencyStddev;
    std::optional<FeatureMix> features;
    std::optional<SamplerKind> sampler;  ///< unset: Gaussian
    /// Held out for every choice, early stopping and the stored metrics.
    double validationFraction = 0.2;
    /// Wall-time budget in seconds (0: none). Past it no residual layer is
    /// started and tuning stops, keeping what was done; the searches before
    /// (bounded by their 4 000-row subset) always run. With a budget the
    /// result depends on the machine's speed, without one only on data and seed.
    double timeLimit = 0.0;
    std::uint64_t seed = 1;
    Index threads = 1;
    std::vector<std::string> inputNames, outputNames;
    std::function<bool(const FitProgress&)> progress;
};

/// Parameter rows per layer for `trainingRows` rows: see DEVELOPERS.md.
inline Index autoWidth(Index trainingRows) { return std::clamp<Index>(trainingRows / 4, 16, 512); }

/// Relative Tikhonov weights tried (outputs standardised).
inline std::vector<double> autoLambdaGrid() { return {1e-12, 1e-10, 1e-8, 1e-6, 1e-4}; }

constexpr Index autoMaxLayers = 8;
/// Passes of the per-input spread search; each stops early when it changes nothing.
constexpr Index autoScalePasses = 8;
/// Width of the shallow trials that choose spread, scales, lambda and features.
constexpr Index autoTrialWidth = 256;

namespace detail {

/// The box whose input j maps to [-scales_j, scales_j] instead of [-1, 1]:
/// Gaussian frequencies on the stretched inputs have spread stddev * scales_j
/// along input j (an anisotropic, ARD-like kernel without a new sampler).
inline InputBox stretchedBox(const InputBox& box, const Vector& scales)
{
    const Vector centre = 0.5 * (box.lower + box.upper);
    const Vector half = (0.5 * (box.upper - box.lower)).cwiseQuotient(scales);
    return InputBox{centre - half, centre + half};
}

}  // namespace detail
constexpr Index autoTuneEpochs = 100;

/// Tuning epochs for a network of `width` parameter rows in all on
/// `trainingRows` rows: autoTuneEpochs, fewer for large problems, so that an
/// epoch budget of about 2e9 row-rows (a few seconds per 1e9 on one core) is
/// kept without a clock.
inline Index autoTuneEpochsFor(Index trainingRows, Index width)
{
    const double perEpoch = double(std::max<Index>(1, trainingRows)) * double(std::max<Index>(1, width));
    return std::clamp<Index>(Index(2e9 / perEpoch), 5, autoTuneEpochs);
}

inline Network autoFit(const MatrixView& inputs, const MatrixView& outputs, const AutoFitOptions& automatic = {})
{
    const auto start = std::chrono::steady_clock::now();
    FitOptions options;
    options.validationFraction = automatic.validationFraction;
    options.seed = automatic.seed;
    options.threads = automatic.threads;
    options.inputNames = automatic.inputNames;
    options.outputNames = automatic.outputNames;
    options.progress = automatic.progress;
    detail::checkTrainingData(inputs, outputs, options);
    const auto training = Index(double(inputs.rows()) * (1.0 - options.validationFraction));
    options.width = automatic.width.value_or(autoWidth(training));
    options.sampler = automatic.sampler.value_or(SamplerKind::gaussian);
    if (automatic.lambda)
        options.lambda = *automatic.lambda;
    if (automatic.features)
        options.features = *automatic.features;
    if (automatic.frequencyStddev)
        options.frequencyStddev = *automatic.frequencyStddev;

    // Steps 2-5 on shallow trials; without held-out rows there is nothing to choose on.
    std::ostringstream chosen;
    if (options.validationFraction > 0.0) {
        FitOptions trialOptions = options;
        trialOptions.width = std::min<Index>(options.width, autoTrialWidth);
        detail::ShallowTrials trials(inputs, outputs, trialOptions, 4000);
        double current = -1.0;  // held-out error of the current trial settings; < 0: not yet scored
        if (!automatic.frequencyStddev) {
            options.frequencyStddev = trials.best(
                frequencyStddevGrid(), [](FitOptions& o, double s) { o.frequencyStddev = s; }, &current);
            chosen << "automatic: frequency stddev\n";
        }
        if (!automatic.lambda) {
            options.lambda =
                trials.best(autoLambdaGrid(), [](FitOptions& o, double l) { o.lambda = l; }, &current);
            chosen << "automatic: lambda\n";
        }
        if (!automatic.frequencyStddev) {
            // Per-input spreads (anisotropy), by stretching each input's box.
            const InputBox dataBox = *trials.settings().inputBox;
            Vector scales = Vector::Ones(inputs.cols());
            for (Index pass = 0; pass < autoScalePasses; ++pass) {
                bool changed = false;
                for (Index j = 0; j < inputs.cols(); ++j)
                    for (double factor : {0.25, 0.5, 2.0, 4.0}) {
                        Vector candidate = scales;
                        candidate[j] *= factor;
                        trials.settings().inputBox = detail::stretchedBox(dataBox, candidate);
                        const double error = trials.score();
                        if (error < 0.97 * current) {
                            current = error;
                            scales = candidate;
                            changed = true;
                        }
                    }
                if (!changed)
                    break;
            }
            trials.settings().inputBox = detail::stretchedBox(dataBox, scales);
            options.frequencyStddev =
                trials.best(frequencyStddevGrid(), [](FitOptions& o, double s) { o.frequencyStddev = s; });
            options.inputBox = trials.settings().inputBox;
            chosen << "automatic: input scales";
            for (Index j = 0; j < scales.size(); ++j)
                chosen << ' ' << scales[j];
            chosen << "\n";
        }
        if (!automatic.features) {
            options.features = trials.best(std::vector<FeatureMix>{FeatureMix::fourier, FeatureMix::both},
                                           [](FitOptions& o, FeatureMix f) { o.features = f; });
            chosen << "automatic: features\n";
        }
    }
    options.layers = automatic.layers.value_or(options.validationFraction > 0.0 ? autoMaxLayers : 0);
    const Index stateWidth = std::max<Index>(1, options.width / 4);
    const Index expectedWidth = (options.layers + 1) * options.width + options.layers * stateWidth;
    options.tune.epochs = automatic.tuneEpochs.value_or(
        options.validationFraction > 0.0 ? autoTuneEpochsFor(training, expectedWidth) : 0);
    options.tune.patience = 10;
    if (automatic.timeLimit > 0.0)
        options.deadline = start + std::chrono::duration_cast<std::chrono::steady_clock::duration>(
                                       std::chrono::duration<double>(automatic.timeLimit));
    Network network = fit(inputs, outputs, options);
    ModelRecord record = network.record();
    record.settings += chosen.str();
    record.fitSeconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
    network.setRecord(std::move(record));
    return network;
}

}  // namespace wavestack
