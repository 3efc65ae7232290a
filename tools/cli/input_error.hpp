#pragma once
/// \file
/// The tool's error for bad command lines and bad input files. main() turns
/// it into one line on stderr and exit code 2; its message already names the
/// file, line and column where that applies.

#include <stdexcept>

namespace wavestack::cli {

class InputError : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

/// Exit codes of every command (documented in `wavestack --help`).
enum ExitCode : int {
    exitOk = 0,
    exitCheckFailed = 1,   ///< verify: the model is outside the tolerance
    exitInputError = 2,    ///< bad command line or input file
    exitFailed = 3,        ///< the computation itself failed (e.g. numerical trouble)
    exitInterrupted = 130, ///< Ctrl-C (128 + SIGINT, common practice for shells)
};

}  // namespace wavestack::cli
