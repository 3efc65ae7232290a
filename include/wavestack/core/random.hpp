#pragma once
/// \file
/// The library's only source of randomness.
///
/// Every random choice flows from one explicit seed, and the same seed gives
/// the same numbers on every platform: the engine is xoshiro256** (Blackman &
/// Vigna, "Scrambled linear pseudorandom number generators", 2021) seeded
/// through SplitMix64, and normals come from our own Box-Muller transform,
/// because std::normal_distribution differs between standard libraries.

#include <array>
#include <cmath>
#include <cstdint>

namespace wavestack {

class Random {
public:
    explicit Random(std::uint64_t seed) noexcept
    {
        // SplitMix64 spreads any seed (even 0) over the 256-bit state.
        for (auto& word : m_state) {
            seed += 0x9e3779b97f4a7c15ULL;
            std::uint64_t z = seed;
            z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ULL;
            z = (z ^ (z >> 27)) * 0x94d049bb133111ebULL;
            word = z ^ (z >> 31);
        }
    }

    /// A generator in a given raw state (for known-answer tests); not all zero.
    static Random fromState(const std::array<std::uint64_t, 4>& state) noexcept
    {
        Random random(0);
        for (int i = 0; i < 4; ++i)
            random.m_state[i] = state[i];
        return random;
    }

    /// Next 64 random bits.
    std::uint64_t nextBits() noexcept
    {
        const std::uint64_t result = rotateLeft(m_state[1] * 5, 7) * 9;
        const std::uint64_t t = m_state[1] << 17;
        m_state[2] ^= m_state[0];
        m_state[3] ^= m_state[1];
        m_state[1] ^= m_state[2];
        m_state[0] ^= m_state[3];
        m_state[2] ^= t;
        m_state[3] = rotateLeft(m_state[3], 45);
        return result;
    }

    /// Uniform on [0, 1) with 53 random bits.
    double uniform() noexcept { return static_cast<double>(nextBits() >> 11) * 0x1.0p-53; }

    /// Standard normal. Box-Muller; both values of a pair are used, in order.
    double normal() noexcept
    {
        if (m_hasSpare) {
            m_hasSpare = false;
            return m_spare;
        }
        const double radius = std::sqrt(-2.0 * std::log(1.0 - uniform()));  // 1 - u is in (0, 1]
        const double angle = 2.0 * 3.141592653589793238 * uniform();
        m_spare = radius * std::sin(angle);
        m_hasSpare = true;
        return radius * std::cos(angle);
    }

private:
    static std::uint64_t rotateLeft(std::uint64_t x, int k) noexcept { return (x << k) | (x >> (64 - k)); }

    std::uint64_t m_state[4] = {};
    double m_spare = 0.0;
    bool m_hasSpare = false;
};

}  // namespace wavestack
