#pragma once
/// \file
/// CRC-32 as in ISO 3309 / ITU-T V.42 (reflected polynomial 0xEDB88320,
/// initial value and final xor 0xFFFFFFFF); check value of "123456789" is
/// 0xCBF43926.

#include <array>
#include <cstddef>
#include <cstdint>

namespace wavestack::detail {

inline std::uint32_t crc32(const unsigned char* data, std::size_t size) noexcept
{
    static const std::array<std::uint32_t, 256> table = [] {
        std::array<std::uint32_t, 256> t{};
        for (std::uint32_t i = 0; i < 256; ++i) {
            std::uint32_t c = i;
            for (int k = 0; k < 8; ++k)
                c = (c & 1U) ? 0xEDB88320U ^ (c >> 1) : c >> 1;
            t[i] = c;
        }
        return t;
    }();
    std::uint32_t crc = 0xFFFFFFFFU;
    for (std::size_t i = 0; i < size; ++i)
        crc = table[(crc ^ data[i]) & 0xFFU] ^ (crc >> 8);
    return crc ^ 0xFFFFFFFFU;
}

}  // namespace wavestack::detail
