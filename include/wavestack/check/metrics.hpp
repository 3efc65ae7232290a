#pragma once
/// \file
/// Error metrics of a prediction against reference values, for reports and
/// for host projects' own accuracy tests.

#include <cmath>
#include <limits>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"

namespace wavestack {

struct ErrorMetrics {
    double rmse = 0.0;          ///< sqrt(mean((p - r)^2))
    double relativeRmse = 0.0;  ///< rmse / std(r) (population std); 0 or +inf when r is constant
    double maxAbsError = 0.0;   ///< max |p - r|
    double rSquared = 0.0;      ///< 1 - sum (p - r)^2 / sum (r - mean r)^2; 1 or -inf when r is constant
    double correlation = 0.0;   ///< Pearson's r of p and r; NaN when either is constant (undefined)
};

/// Metrics of one output column. Throws on empty, mismatched or non-finite input.
inline ErrorMetrics measureErrors(const VectorView& predicted, const VectorView& reference)
{
    if (predicted.size() != reference.size())
        throw InvalidInput("measureErrors: " + std::to_string(predicted.size()) + " predictions but " +
                           std::to_string(reference.size()) + " reference values");
    if (reference.size() == 0)
        throw InvalidInput("measureErrors: no values to compare");
    detail::requireFinite(predicted, "measureErrors: predicted");
    detail::requireFinite(reference, "measureErrors: reference");

    const double count = static_cast<double>(reference.size());
    const auto error = (predicted - reference).array();
    const auto r = (reference.array() - reference.mean());
    const auto p = (predicted.array() - predicted.mean());
    const double squaredError = error.square().sum();
    const double referenceSpread = r.square().sum();
    const double predictedSpread = p.square().sum();

    ErrorMetrics metrics;
    metrics.rmse = std::sqrt(squaredError / count);
    metrics.maxAbsError = error.abs().maxCoeff();
    constexpr double infinity = std::numeric_limits<double>::infinity();
    if (referenceSpread > 0.0) {
        metrics.relativeRmse = metrics.rmse / std::sqrt(referenceSpread / count);
        metrics.rSquared = 1.0 - squaredError / referenceSpread;
    } else {
        metrics.relativeRmse = squaredError > 0.0 ? infinity : 0.0;
        metrics.rSquared = squaredError > 0.0 ? -infinity : 1.0;
    }
    metrics.correlation = referenceSpread > 0.0 && predictedSpread > 0.0
                              ? (r * p).sum() / std::sqrt(referenceSpread * predictedSpread)
                              : std::numeric_limits<double>::quiet_NaN();
    return metrics;
}

/// Metrics per output column of N x m predictions against N x m references.
inline std::vector<ErrorMetrics> measureColumnErrors(const MatrixView& predicted, const MatrixView& reference)
{
    if (predicted.rows() != reference.rows() || predicted.cols() != reference.cols())
        throw InvalidInput("measureColumnErrors: predictions are " + std::to_string(predicted.rows()) + " x " +
                           std::to_string(predicted.cols()) + " but references are " +
                           std::to_string(reference.rows()) + " x " + std::to_string(reference.cols()));
    std::vector<ErrorMetrics> metrics;
    for (Index j = 0; j < reference.cols(); ++j)
        metrics.push_back(measureErrors(predicted.col(j), reference.col(j)));
    return metrics;
}

}  // namespace wavestack
