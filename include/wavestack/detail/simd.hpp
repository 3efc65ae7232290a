#pragma once
/// \file
/// Small vectorised kernels shared by feature evaluation, for double and
/// float: sine and cosine of an array (detail/sincos.hpp), tanh in place,
/// and dot products. Each uses xsimd's widest batch for the build's target
/// (compile with -march=native or -mavx2 to get 4 or 8 double lanes, twice
/// as many floats).

#include <cmath>

#include <xsimd/xsimd.hpp>

#include "wavestack/core/types.hpp"
#include "wavestack/detail/sincos.hpp"

namespace wavestack::detail {

template <class T>
constexpr Index lanes = static_cast<Index>(xsimd::batch<T>::size);

/// sine[i] = sin(angle[i]), cosine[i] = cos(angle[i]) for i < count.
/// `cosine` may alias `angle` (each batch is loaded before it is stored).
template <class T>
void sincos(const T* angle, T* sine, T* cosine, Index count) noexcept
{
    using Batch = xsimd::batch<T>;
    const Index vectorEnd = count - count % lanes<T>;
    for (Index i = 0; i < vectorEnd; i += lanes<T>) {
        Batch s, c;
        sincos(Batch::load_unaligned(angle + i), s, c);
        s.store_unaligned(sine + i);
        c.store_unaligned(cosine + i);
    }
    for (Index i = vectorEnd; i < count; ++i) {
        const T a = angle[i];
        sine[i] = std::sin(a);
        cosine[i] = std::cos(a);
    }
}

/// x[i] = tanh(x[i]) for i < count.
template <class T>
void tanhInPlace(T* x, Index count) noexcept
{
    using Batch = xsimd::batch<T>;
    const Index vectorEnd = count - count % lanes<T>;
    for (Index i = 0; i < vectorEnd; i += lanes<T>)
        xsimd::tanh(Batch::load_unaligned(x + i)).store_unaligned(x + i);
    for (Index i = vectorEnd; i < count; ++i)
        x[i] = std::tanh(x[i]);
}

/// sum_i a[i] * b[i]. The compiler may not reorder a floating-point sum by
/// itself, so a plain loop runs one FMA per latency period; lane-wise
/// partial sums run one per cycle.
template <class T>
T dot(const T* a, const T* b, Index count) noexcept
{
    using Batch = xsimd::batch<T>;
    const Index vectorEnd = count - count % lanes<T>;
    Batch sum(T(0));
    for (Index i = 0; i < vectorEnd; i += lanes<T>)
        sum = xsimd::fma(Batch::load_unaligned(a + i), Batch::load_unaligned(b + i), sum);
    T total = xsimd::hadd(sum);
    for (Index i = vectorEnd; i < count; ++i)
        total += a[i] * b[i];
    return total;
}

}  // namespace wavestack::detail
