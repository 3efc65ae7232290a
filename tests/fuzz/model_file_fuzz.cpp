// libFuzzer target: decodeModel must turn any byte string into a network or
// a wavestack::Error, never a crash, a hang, undefined behaviour or a huge
// allocation. Built with -fsanitize=fuzzer,address,undefined by
// run_fuzz.cmake; the seed corpus is tests/data.
#include <cstddef>
#include <cstdint>
#include <vector>

#include <wavestack/io/model_file.hpp>

namespace {

void decode(const std::uint8_t* data, std::size_t size)
{
    try {
        const wavestack::Network net = wavestack::decodeModel(data, size);
        // A network that loads must evaluate to finite values at its box centre.
        const wavestack::Vector centre =
            0.5 * (net.inputScaler().box().lower + net.inputScaler().box().upper);
        const wavestack::Vector y = net.evaluate(centre);
        (void)y;
    } catch (const wavestack::Error&) {
    }
}

void putLe(std::vector<std::uint8_t>& out, std::uint64_t v, int n)
{
    for (int i = 0; i < n; ++i)
        out.push_back(static_cast<std::uint8_t>(v >> (8 * i)));
}

}  // namespace

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size)
{
    // The bytes as a whole file (header and checksums checked) ...
    decode(data, size);
    // ... and, past the checksums, the bytes after a 32-byte header as a
    // payload under a valid header, so mutations reach the section parser.
    const std::size_t skip = size >= 32 ? 32 : 0;
    std::vector<std::uint8_t> file(wavestack::modelfile::magic, wavestack::modelfile::magic + 8);
    putLe(file, wavestack::modelfile::formatVersion, 4);
    putLe(file, wavestack::modelfile::binary64, 4);
    putLe(file, size - skip, 8);
    putLe(file, wavestack::detail::crc32(data + skip, size - skip), 4);
    putLe(file, wavestack::detail::crc32(file.data(), 28), 4);
    file.insert(file.end(), data + skip, data + size);
    decode(file.data(), file.size());
    return 0;
}
