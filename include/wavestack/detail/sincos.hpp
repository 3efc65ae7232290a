#pragma once
/// \file
/// Sine and cosine of a SIMD batch together, for the Fourier features: one
/// range reduction serves both. Angle x = q pi/2 + r with q the nearest
/// integer to 2x/pi and |r| <= pi/4; pi/2 is split in three parts
/// (Cody & Waite 1980) whose first two products with q are exact for
/// |x| <= reducedLimit, with or without fused multiply-add, so r carries
/// only the rounding of the last subtractions whatever the size of x.
/// sin r and cos r are minimax polynomials in r^2 on [0, (pi/4)^2]
/// (tools/coefficients/sincos_minimax.py produced every constant below and
/// documents how); the quadrant q mod 4 then swaps and negates them. Lanes
/// with |x| > reducedLimit or x infinite go to std::sin and std::cos, so
/// the result is always right, only slower there.
///
/// Accuracy, against long double sinl and cosl on 10^6 angles per range
/// (tests/sincos_test.cpp checks it): at most 1.4e-16 absolute error on
/// [-pi/4, pi/4] and 2.1e-16 (about one ulp of 1) for every |x| <= 9e5 in
/// double; 7.4e-8 and 1.1e-7 for |x| <= 5 000 in float (the same with SSE2,
/// AVX2 and AVX-512 builds, g++ and clang). Speed (AVX-512, g++ 12): 0.6 ns
/// per double and 0.21 ns per float angle, 19-30 % less than xsimd::sincos,
/// which makes whole-network evaluation 5-17 % faster (DEVELOPERS.md).

#include <array>
#include <cmath>
#include <cstddef>
#include <type_traits>

#include <xsimd/xsimd.hpp>

namespace wavestack::detail {

template <class T>
struct SincosConstants;

template <>
struct SincosConstants<double> {
    static constexpr std::array<double, 6> sine = {
        -1.6666666666666632e-1, 8.3333333333224245e-3, -1.9841269829816907e-4,
        2.7557313695210815e-6,  -2.5050758650721605e-8, 1.5896827776200585e-10};
    static constexpr std::array<double, 6> cosine = {
        4.1666666666666600e-2,  -1.3888888888874139e-3, 2.4801587289491792e-5,
        -2.7557314355231104e-7, 2.0875723682895971e-9,  -1.1359669784375879e-11};
    // pi/2 = c1 + c2 + c3; c1 and c2 have 33 significant bits, so q * c1 and
    // q * c2 are exact for |q| < 2^20.
    static constexpr double c1 = 1.5707963267341256, c2 = 6.0771005063039660e-11, c3 = 2.0222662487959507e-21;
    static constexpr double reducedLimit = 1.0e6;  // |q| < 2^20
};

template <>
struct SincosConstants<float> {
    static constexpr std::array<float, 3> sine = {-1.66666549e-1f, 8.33217814e-3f, -1.95172987e-4f};
    static constexpr std::array<float, 3> cosine = {4.16666469e-2f, -1.38873675e-3f, 2.44384513e-5f};
    // 12 significant bits in c1 and c2: q * c exact for |q| < 2^12.
    static constexpr float c1 = 1.57080078f, c2 = -4.45358455e-6f, c3 = -8.70551570e-10f;
    static constexpr float reducedLimit = 6000.0f;  // |q| < 2^12
};

/// c[0] + t c[1] + t^2 c[2] + ... by Horner's rule.
template <class Batch, class T, std::size_t n>
Batch polynomial(const Batch& t, const std::array<T, n>& c) noexcept
{
    Batch sum(c[n - 1]);
    for (std::size_t i = n - 1; i-- > 0;)
        sum = xsimd::fma(sum, t, Batch(c[i]));
    return sum;
}

#if defined(__GNUC__)
#define WAVESTACK_DETAIL_NOINLINE __attribute__((noinline))
#else
#define WAVESTACK_DETAIL_NOINLINE
#endif

/// Replaces the lanes where |x| > reducedLimit by std::sin and std::cos.
/// Rare, so kept out of line: the common path stays small enough to inline.
template <class T, class Arch>
WAVESTACK_DETAIL_NOINLINE void sincosLargeAngles(const xsimd::batch<T, Arch>& x, xsimd::batch<T, Arch>& sine,
                                                 xsimd::batch<T, Arch>& cosine) noexcept
{
    using Batch = xsimd::batch<T, Arch>;
    alignas(Arch::alignment()) std::array<T, Batch::size> angles, s, c;
    x.store_aligned(angles.data());
    sine.store_aligned(s.data());
    cosine.store_aligned(c.data());
    for (std::size_t i = 0; i < Batch::size; ++i)
        if (std::abs(angles[i]) > SincosConstants<T>::reducedLimit) {
            s[i] = std::sin(angles[i]);
            c[i] = std::cos(angles[i]);
        }
    sine = Batch::load_aligned(s.data());
    cosine = Batch::load_aligned(c.data());
}

/// sin(x) and cos(x), lane by lane.
template <class T, class Arch>
void sincos(const xsimd::batch<T, Arch>& x, xsimd::batch<T, Arch>& sine, xsimd::batch<T, Arch>& cosine) noexcept
{
    using Batch = xsimd::batch<T, Arch>;
    using Bits = xsimd::batch<xsimd::as_unsigned_integer_t<T>, Arch>;
    using K = SincosConstants<T>;
    using Unsigned = xsimd::as_unsigned_integer_t<T>;
    const Bits signBit(Unsigned(1) << (8 * sizeof(T) - 1));
    // Adding 1.5 * 2^(mantissa bits) rounds 2x/pi to the nearest integer q
    // and leaves q mod 4 in the lowest bits of the sum.
    const Batch magic(std::is_same_v<T, double> ? T(6755399441055744.0) : T(12582912.0f));
    const Batch shifted = xsimd::fma(x, Batch(T(0.63661977236758134308)), magic);  // 2/pi
    const Bits quadrant = xsimd::bitwise_cast<Bits>(shifted);
    const Batch q = shifted - magic;
    const Batch r = xsimd::fnma(q, Batch(K::c3), xsimd::fnma(q, Batch(K::c2), xsimd::fnma(q, Batch(K::c1), x)));
    const Batch t = r * r;
    const Batch s = xsimd::fma(r * t, polynomial(t, K::sine), r);
    const Batch c = xsimd::fma(t * t, polynomial(t, K::cosine), xsimd::fnma(Batch(T(0.5)), t, Batch(T(1))));
    // Odd quadrants swap sine and cosine; 2 and 3 negate the sine, 1 and 2
    // the cosine (bit 1 of q and of q + 1).
    const Batch odd = xsimd::bitwise_cast<Batch>(Bits(0) - (quadrant & Bits(1)));  // all ones or zero
    // s ^ ((s ^ c) & odd) picks c in odd lanes (no andnot: its operand order differs between xsimd kernels).
    const Batch flip = xsimd::bitwise_and(xsimd::bitwise_xor(s, c), odd);
    const Batch swappedSine = xsimd::bitwise_xor(s, flip), swappedCosine = xsimd::bitwise_xor(c, flip);
    // 0 - (bit 1) is 0 or all ones but bit 0, so "& signBit" moves bit 1 to
    // the sign bit without a vector shift (GCC 12's AVX-512 shift intrinsics
    // raise a false -Wuninitialized in every unit that compiles this).
    const Bits sineSign = (Bits(0) - (quadrant & Bits(2))) & signBit;
    const Bits cosineSign = (Bits(0) - ((quadrant + Bits(1)) & Bits(2))) & signBit;
    sine = xsimd::bitwise_xor(swappedSine, xsimd::bitwise_cast<Batch>(sineSign));
    cosine = xsimd::bitwise_xor(swappedCosine, xsimd::bitwise_cast<Batch>(cosineSign));
    // NaN stays NaN through the arithmetic above; large and infinite angles need the C library.
    if (xsimd::any(xsimd::abs(x) > Batch(K::reducedLimit)))
        sincosLargeAngles(x, sine, cosine);
}

#undef WAVESTACK_DETAIL_NOINLINE

}  // namespace wavestack::detail
