#pragma once
/// \file
/// Where the training inputs lay, so a host can tell when an input is outside
/// what the model has seen and fall back to the real model there.

#include <algorithm>
#include <cmath>
#include <string>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"

namespace wavestack {

/// Two cheap descriptions of the training inputs: their bounding box, and
/// their mean and covariance. The shape test flags points whose Mahalanobis
/// distance from the mean exceeds the largest one among the training points:
/// inside the box but far from the data (a corner of a box the data never
/// filled, say).
class TrainingDomain {
public:
    TrainingDomain() = default;

    /// From training inputs (rows = points).
    static TrainingDomain fromData(const MatrixView& inputs)
    {
        TrainingDomain domain;
        domain.m_lower = inputs.colwise().minCoeff().transpose();
        domain.m_upper = inputs.colwise().maxCoeff().transpose();
        domain.m_mean = inputs.colwise().mean().transpose();
        const Matrix centred = inputs.rowwise() - domain.m_mean.transpose();
        domain.m_covariance = centred.transpose() * centred / double(std::max<Index>(1, inputs.rows() - 1));
        domain.factor();
        double limit = 0.0;
        for (Index i = 0; i < inputs.rows(); ++i)
            limit = std::max(limit, domain.squaredDistance(inputs.row(i).transpose()));
        domain.m_shapeLimit = limit;
        return domain;
    }

    /// From stored parts (a loaded model file); checks shapes and values.
    TrainingDomain(Vector lower, Vector upper, Vector mean, Matrix covariance, double shapeLimit)
        : m_lower(std::move(lower)), m_upper(std::move(upper)), m_mean(std::move(mean)),
          m_covariance(std::move(covariance)), m_shapeLimit(shapeLimit)
    {
        const Index d = m_lower.size();
        if (m_upper.size() != d || m_mean.size() != d || m_covariance.rows() != d || m_covariance.cols() != d)
            throw InvalidInput("TrainingDomain: parts of different sizes");
        if (!(m_upper.array() >= m_lower.array()).all())
            throw InvalidInput("TrainingDomain: upper < lower");
        detail::requireNonNegative(shapeLimit, "TrainingDomain: shape limit");
        factor();
    }

    bool empty() const { return m_lower.size() == 0; }
    Index inputCount() const { return m_lower.size(); }
    const Vector& lower() const { return m_lower; }
    const Vector& upper() const { return m_upper; }
    const Vector& mean() const { return m_mean; }
    const Matrix& covariance() const { return m_covariance; }
    double shapeLimit() const { return m_shapeLimit; }

    /// True when x (inputCount() values) lies outside the training box.
    bool outsideBox(const double* x) const noexcept
    {
        for (Index j = 0; j < m_lower.size(); ++j)
            if (!(x[j] >= m_lower[j] && x[j] <= m_upper[j]))  // NaN counts as outside
                return true;
        return false;
    }

    /// True when x is outside the box, or inside it but farther from the
    /// data's mean (in Mahalanobis distance) than any training point.
    bool outside(const VectorView& x) const
    {
        const Vector point = x;
        return outsideBox(point.data()) || squaredDistance(point) > m_shapeLimit * (1.0 + 1e-12);
    }

    /// (x - mean)^T C^-1 (x - mean), C the covariance regularised so that
    /// constant inputs do not make it singular.
    double squaredDistance(const Vector& x) const
    {
        return m_factor.matrixL().solve(x - m_mean).squaredNorm();
    }

private:
    void factor()
    {
        Matrix regularised = m_covariance;
        const double scale = std::max(1e-300, m_covariance.diagonal().cwiseAbs().maxCoeff());
        regularised.diagonal().array() += 1e-10 * scale;
        m_factor.compute(regularised);
        if (m_factor.info() != Eigen::Success)
            throw InvalidInput("TrainingDomain: the covariance is not positive semi-definite");
    }

    Vector m_lower, m_upper, m_mean;
    Matrix m_covariance;
    double m_shapeLimit = 0.0;
    Eigen::LLT<Matrix> m_factor;
};

}  // namespace wavestack
