#pragma once
// Small helpers shared by the tests: seeded random matrices and samples.

#include <cstdint>

#include <wavestack/core/random.hpp>
#include <wavestack/core/types.hpp>

namespace wavestack::testing {

/// rows x cols independent N(0, scale^2) entries.
inline Matrix randomNormal(Index rows, Index cols, double scale, Random& random)
{
    Matrix a(rows, cols);
    for (Index i = 0; i < a.size(); ++i)
        a.data()[i] = scale * random.normal();
    return a;
}

struct Sample {
    Matrix x, y;
};

/// n points uniform on [-1, 1]^d and y = f(row of x), one output.
template <class F>
Sample uniformSample(Index n, Index d, std::uint64_t seed, F f)
{
    Random random(seed);
    Sample sample{Matrix(n, d), Matrix(n, 1)};
    for (Index i = 0; i < n; ++i) {
        for (Index j = 0; j < d; ++j)
            sample.x(i, j) = 2.0 * random.uniform() - 1.0;
        sample.y(i, 0) = f(sample.x.row(i));
    }
    return sample;
}

}  // namespace wavestack::testing
