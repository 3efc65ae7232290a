#pragma once
/// \file
/// Progress of `fit` on stderr. On a terminal one status line is redrawn in
/// place (stage, layer i of L, sampler iteration, errors, elapsed and
/// estimated remaining time); otherwise (a log file, CI) plain lines are
/// printed at each finished layer and at most every few seconds in between.
/// The callback also turns Ctrl-C into a cancellation request.

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <string>

#include <fmt/format.h>

#include "interrupt.hpp"
#include "wavestack/train/fit.hpp"

namespace wavestack::cli {

/// "1:05" or "1:02:03".
inline std::string clockText(double seconds)
{
    const long total = long(std::max(0.0, seconds) + 0.5);
    if (total >= 3600)
        return fmt::format("{}:{:02}:{:02}", total / 3600, total / 60 % 60, total % 60);
    return fmt::format("{}:{:02}", total / 60, total % 60);
}

class ProgressDisplay {
public:
    enum class Mode { live, lines, quiet };

    /// `layers` residual layers planned, `iterations` sampler iterations per
    /// layer, `epochs` Adam epochs: the work units behind the time estimate.
    ProgressDisplay(Mode mode, Index layers, Index iterations, Index epochs)
        : m_mode(mode), m_layers(layers), m_iterations(std::max<Index>(1, iterations)), m_epochs(epochs),
          m_start(std::chrono::steady_clock::now())
    {
    }

    /// The FitOptions::progress callback.
    bool operator()(FitProgress p)
    {
        // Elapsed time of the whole command: the stages' own clocks restart.
        p.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - m_start).count();
        if (interrupted())
            return false;
        if (m_mode == Mode::quiet)
            return true;
        const bool milestone =
            p.stage != "sampling" && p.stage != "tuning" && p.stage != "search" && p.stage != "refit" &&
            p.stage != "compact";
        const double minimumGap = m_mode == Mode::live ? 0.1 : 5.0;
        if (!milestone && p.seconds - m_lastPrint < minimumGap)
            return true;
        m_lastPrint = p.seconds;
        const std::string text = describe(p);
        if (m_mode == Mode::live)
            std::fprintf(stderr, "\r%s\x1b[K", text.c_str());  // redraw, clear the rest of the line
        else
            std::fprintf(stderr, "%s\n", text.c_str());
        std::fflush(stderr);
        return true;
    }

    /// Ends the live line so later output starts on a fresh one.
    void finish()
    {
        if (m_mode == Mode::live && m_lastPrint >= 0.0)
            std::fputc('\n', stderr);
        m_lastPrint = -1.0;
    }

private:
    std::string describe(const FitProgress& p) const
    {
        std::string text;
        if (p.stage == "search")
            text = fmt::format("fit: choosing settings (leave-one-out), trial {}", p.layer + 1);
        else if (p.stage == "tuning")
            text = fmt::format("fit: tuning epoch {}/{}", p.tuning.epoch, m_epochs);
        else if (p.stage == "compact" && p.tuning.epoch > 0)
            text = fmt::format("fit: front check: compact network, tuning epoch {}", p.tuning.epoch);
        else if (p.stage == "compact")
            text = fmt::format("fit: front check: compact network, layer {}", p.layer);
        else if (p.stage == "refit")
            text = fmt::format("fit: settings chosen; refitting on every row, layer {}", p.layer);
        else if (p.stage == "sampling")
            text = fmt::format("fit: layer {}/{} sampling {}/{}", p.layer, m_layers, p.sampler.iteration,
                               p.sampler.iterations);
        else if (p.stage == "layer")
            text = fmt::format("fit: layer {}/{} done", p.layer, m_layers);
        else if (p.stage == "dropped")
            text = fmt::format("fit: layer {}/{} dropped (it would have raised the training error)", p.layer, m_layers);
        else if (p.stage == "stopped")
            text = fmt::format("fit: held-out error stopped improving at layer {}; no more layers", p.layer);
        else
            text = fmt::format("fit: {}", p.stage);
        if (p.trainingRmse >= 0.0)
            text += fmt::format("  train {:.3g}", p.trainingRmse);
        if (p.validationRmse >= 0.0)
            text += fmt::format("  held-out {:.3g}", p.validationRmse);
        text += fmt::format("  {} elapsed", clockText(p.seconds));
        const double done = doneFraction(p);
        if (done > 0.02 && done < 1.0)
            text += fmt::format("  at most ~{} left", clockText(p.seconds * (1.0 - done) / done));
        return text;
    }

    /// Share of the planned work done: sampler iterations of every layer,
    /// then tuning epochs, counted as equal units. Early stopping usually
    /// ends the work sooner, hence "at most".
    double doneFraction(const FitProgress& p) const
    {
        const double perLayer = double(m_iterations + 1);
        const double total = double(m_layers + 1) * perLayer + double(m_epochs);
        double done = 0.0;
        if (p.stage == "search" || p.stage == "refit" || p.stage == "compact")
            return 0.0;  // search: short and does not predict the rest; refit, compact: outside the plan above
        if (p.stage == "tuning")
            done = double(m_layers + 1) * perLayer + double(p.tuning.epoch);
        else if (p.stage == "sampling")
            done = double(p.layer) * perLayer + double(p.sampler.iteration);
        else
            done = double(p.layer + 1) * perLayer;
        return std::min(1.0, done / total);
    }

    Mode m_mode;
    Index m_layers, m_iterations, m_epochs;
    std::chrono::steady_clock::time_point m_start;
    double m_lastPrint = -1.0;
};

}  // namespace wavestack::cli
