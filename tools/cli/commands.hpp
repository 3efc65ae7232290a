#pragma once
/// \file
/// The tool's commands: each takes its parsed options and returns an exit
/// code (input_error.hpp). main.cpp declares the command line.

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "wavestack/core/types.hpp"

namespace wavestack::cli {

struct FitCommand {
    std::string data, model;
    std::vector<std::string> targets;
    std::string inputs;  // comma separated; empty: automatic
    std::optional<Index> layers, width, tuneEpochs;
    std::optional<double> holdout, lambda, frequencyStddev;
    std::optional<std::string> sampler, features;
    double timeLimit = 0.0;  // seconds; 0: none
    bool noKernel = false;   // never a kernel term (AutoFitOptions::kernelTerm)
    std::uint64_t seed = 1;
    Index threads = 0;  // 0: all hardware threads
    bool quiet = false;
};

struct PredictCommand {
    std::string model, data, output;  // output empty: stdout
    bool gradient = false, flagOutside = false;
};

struct InfoCommand {
    std::string model;
};

struct VerifyCommand {
    std::string model, data;
    std::optional<double> maxRelRmse, maxAbsError;
    Index worst = 5;
};

struct ReportCommand {
    std::string model, data, output;
};

int runFit(const FitCommand& command);
int runPredict(const PredictCommand& command);
int runInfo(const InfoCommand& command);
int runVerify(const VerifyCommand& command);
int runReport(const ReportCommand& command);

}  // namespace wavestack::cli
