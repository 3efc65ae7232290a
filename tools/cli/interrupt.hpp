#pragma once
/// \file
/// Ctrl-C (SIGINT) and SIGTERM as a flag the commands poll, instead of
/// killing the process: fit's progress callback then cancels training, and
/// outputs in progress are discarded by OutputFile, so nothing half-written
/// is ever left behind.

#include <atomic>
#include <csignal>
#include <stdexcept>

namespace wavestack::cli {

inline volatile std::sig_atomic_t interruptFlag = 0;

/// The first signal asks for a clean stop; a second one (the user insists)
/// gets the default action, i.e. ends the process at once.
extern "C" inline void recordInterrupt(int signal)
{
    if (interruptFlag) {
        std::signal(signal, SIG_DFL);
        std::raise(signal);
    }
    interruptFlag = signal;
}

inline void catchInterrupts()
{
    std::signal(SIGINT, recordInterrupt);
    std::signal(SIGTERM, recordInterrupt);
}

inline bool interrupted() { return interruptFlag != 0; }

/// Exit code after an interruption: 128 + the signal's number (common shell
/// practice: 130 for Ctrl-C, 143 for SIGTERM).
inline int interruptedExitCode() { return 128 + (interruptFlag != 0 ? int(interruptFlag) : SIGINT); }

/// Thrown by a command that noticed the flag; main() exits with exitInterrupted.
class Interrupted : public std::runtime_error {
public:
    using std::runtime_error::runtime_error;
};

}  // namespace wavestack::cli
