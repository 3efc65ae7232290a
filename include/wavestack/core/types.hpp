#pragma once
/// \file
/// Scalar, index and matrix aliases used throughout wavestack.
///
/// Data matrices hold one point per row (N x d inputs, N x m outputs), the
/// layout simulation codes write their samples in. Eigen's default column-major
/// storage is kept so that users' Eigen::MatrixXd passes without a copy.

#include <Eigen/Dense>

namespace wavestack {

using Index = Eigen::Index;
using Matrix = Eigen::MatrixXd;
using Vector = Eigen::VectorXd;

/// Read-only view of a matrix argument; binds to any dense double expression.
using MatrixView = Eigen::Ref<const Matrix>;
/// Read-only view of a vector argument.
using VectorView = Eigen::Ref<const Vector>;

}  // namespace wavestack
