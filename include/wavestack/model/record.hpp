#pragma once
/// \file
/// What a model remembers of its training: names, held-out metrics, the
/// settings used and the training curve. Saved with the model; never used
/// in evaluation.

#include <string>
#include <vector>

#include "wavestack/check/metrics.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack {

/// One point of the training curve: the network after a layer was added.
struct TrainingStep {
    Index layer = 0;
    double trainingRmse = 0.0;    ///< standardised output units
    double validationRmse = -1.0; ///< standardised output units; -1 without a held-out split
};

/// One point of the tuning curve: the network after an Adam epoch (0: before tuning).
struct TuningStep {
    Index epoch = 0;
    double trainingRmse = 0.0;    ///< standardised output units
    double validationRmse = -1.0; ///< standardised output units; -1 without a held-out split
};

struct ModelRecord {
    std::vector<std::string> inputNames;   ///< empty: x0, x1, ...
    std::vector<std::string> outputNames;  ///< empty: y0, y1, ...
    /// Per output, measured on the held-out rows at fit time (original units); empty without a split.
    std::vector<ErrorMetrics> heldOutMetrics;
    /// Training settings, one "key = value" per line.
    std::string settings;
    std::vector<TrainingStep> history;
    /// Per Adam epoch when the model was fine-tuned; empty otherwise.
    std::vector<TuningStep> tuningHistory;
    /// Wall time of the fit in seconds; 0 when unknown (hand-built model).
    double fitSeconds = 0.0;
};

}  // namespace wavestack
