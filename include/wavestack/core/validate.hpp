#pragma once
/// \file
/// Checks on user data shared by every entry point. Each check throws
/// InvalidInput with the argument's name and the offending row and column.

#include <cmath>
#include <string>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack::detail {

/// Throws unless every entry of `data` is finite. Rows and columns count from 0.
inline void requireFinite(const MatrixView& data, const char* name)
{
    for (Index col = 0; col < data.cols(); ++col)
        for (Index row = 0; row < data.rows(); ++row) {
            const double value = data(row, col);
            if (!std::isfinite(value))
                throw InvalidInput(std::string(name) + ": row " + std::to_string(row) + ", column " +
                                   std::to_string(col) + " is " + (std::isnan(value) ? "NaN" : "infinite") +
                                   " (rows and columns count from 0)");
        }
}

/// Throws unless `value` is finite and positive.
inline void requirePositive(double value, const char* name)
{
    if (!(std::isfinite(value) && value > 0.0))
        throw InvalidInput(std::string(name) + " must be a finite number > 0, got " + std::to_string(value));
}

/// Throws unless `value` is finite and not negative.
inline void requireNonNegative(double value, const char* name)
{
    if (!(std::isfinite(value) && value >= 0.0))
        throw InvalidInput(std::string(name) + " must be a finite number >= 0, got " + std::to_string(value));
}

}  // namespace wavestack::detail
