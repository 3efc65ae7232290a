#pragma once
/// \file
/// Adaptive Metropolis sampling of feature parameters (Kammonen, Kiessling,
/// Plecháč, Sandberg & Szepessy, "Adaptive random Fourier features with
/// Metropolis sampling", Foundations of Data Science, 2020).
///
/// Gaussian random features spend most of their width where the target has
/// no spectral mass. The Metropolis chain moves each parameter row by a
/// random walk and keeps a move with probability min(1, (|b'_k| / |b_k|)^gamma),
/// so rows drift to where the fitted amplitudes are large: for Fourier
/// features, towards frequencies where the target's transform has mass.
/// After each accept step the rows are resampled in proportion to |b_k|
/// (MetropolisSettings::resample), so rows that carry the fit multiply.
/// Contract: see sampling/gaussian_sampler.hpp. The sampler only sees
/// parameter rows and amplitude norms, so it drives every feature map.

#include <algorithm>
#include <cmath>
#include <string>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/random.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/core/validate.hpp"
#include "wavestack/features/feature_group.hpp"
#include "wavestack/sampling/gaussian_sampler.hpp"
#include "wavestack/train/layer_problem.hpp"

namespace wavestack {

struct MetropolisSettings {
    /// Chain length after the initial draw.
    Index iterations = 100;
    /// Exponent of the acceptance ratio. 0 selects gamma = 3d - 2 (d inputs),
    /// the choice of Kammonen et al. 2020, which a reference prototype also
    /// found best or tied against 2d and d.
    double gamma = 0.0;
    /// Standard deviation of the initial Gaussian draw (scaled inputs).
    double initialStddev = GaussianSampler::defaultStddev;
    /// Tikhonov weight of the chain's solves (the final amplitudes use the
    /// fit's own lambda). A reference prototype found 1e-4 (fronts) to 1e-5
    /// (smooth) worked, 1e-6 unstable and 1e-3 too strong: small weights let
    /// rows with no spectral mass fit noise with large amplitudes, and the
    /// acceptance test then rewards them.
    double lambda = 1e-5;
    /// Initial random-walk step delta.
    double step = 0.5;
    /// Cap on delta during adaptation: uncapped adaptation toward a low
    /// acceptance rate diverged in a reference prototype (delta to 1e6).
    double maxStep = 3.0;
    /// Acceptance rate that delta adapts toward during burn-in.
    double targetAcceptance = 0.3;
    /// Fraction of the iterations during which delta adapts; fixed after.
    double burnInFraction = 0.25;
    /// After each accept step, redraw every group's rows from the group
    /// itself with probability proportional to |b_k|, then re-solve
    /// (resample-move: Gilks & Berzuini, J. R. Stat. Soc. B 63, 2001). Rows
    /// that carry the fit multiply and the random walk refines the copies,
    /// where the per-row test alone reads noisy norms of a nearly collinear
    /// set. A third solve per iteration. Measured in DEVELOPERS.md, "Defaults".
    bool resample = true;
};

class MetropolisSampler {
public:
    explicit MetropolisSampler(const MetropolisSettings& settings = MetropolisSettings()) : m_settings(settings)
    {
        if (settings.iterations < 1)
            throw InvalidInput("MetropolisSampler: iterations must be at least 1, got " +
                               std::to_string(settings.iterations));
        if (!(settings.gamma >= 0.0) || !std::isfinite(settings.gamma))
            throw InvalidInput("MetropolisSampler: gamma must be > 0 (or 0 for 3d - 2), got " +
                               std::to_string(settings.gamma));
        detail::requirePositive(settings.initialStddev, "MetropolisSampler: initialStddev");
        detail::requireNonNegative(settings.lambda, "MetropolisSampler: lambda");
        detail::requirePositive(settings.step, "MetropolisSampler: step (delta)");
        detail::requirePositive(settings.maxStep, "MetropolisSampler: maxStep");
        if (!(settings.targetAcceptance > 0.0 && settings.targetAcceptance < 1.0))
            throw InvalidInput("MetropolisSampler: targetAcceptance must lie in (0, 1), got " +
                               std::to_string(settings.targetAcceptance));
        if (!(settings.burnInFraction >= 0.0 && settings.burnInFraction <= 1.0))
            throw InvalidInput("MetropolisSampler: burnInFraction must lie in [0, 1], got " +
                               std::to_string(settings.burnInFraction));
    }

    const MetropolisSettings& settings() const { return m_settings; }

    /// gamma for d inputs.
    double gamma(Index inputCount) const
    {
        return m_settings.gamma > 0.0 ? m_settings.gamma : std::max(1.0, 3.0 * double(inputCount) - 2.0);
    }

    /// Runs the chain. With a validation split the rows of the iteration with
    /// the lowest held-out error are returned (iteration 0, the Gaussian
    /// draw, included), so the chain never ends worse on held-out data than
    /// its own starting point. The problem's last solve matches the result.
    template <class Problem>
    std::vector<FeatureGroup> sample(Problem& problem, const std::vector<GroupShape>& shapes, Random& random) const
    {
        const double exponent = gamma(problem.inputCount());
        const Index iterations = m_settings.iterations;
        const Index burnIn = static_cast<Index>(std::ceil(m_settings.burnInFraction * double(iterations)));

        std::vector<FeatureGroup> current = GaussianSampler(m_settings.initialStddev).sample(problem, shapes, random);
        Vector norms = problem.solve(current, m_settings.lambda);
        std::vector<FeatureGroup> proposal = current;
        std::vector<FeatureGroup> best = current;
        double step = m_settings.step;
        SamplerProgress progress{0, iterations, 0.0, step, problem.trainingRmse(), -1.0};
        double bestError = validationOrTraining(problem, current, progress.trainingRmse);
        if (problem.hasValidation())
            progress.validationRmse = bestError;
        problem.report(progress);

        for (Index iteration = 1; iteration <= iterations; ++iteration) {
            for (std::size_t g = 0; g < current.size(); ++g) {
                Matrix& p = proposal[g].parameters;
                const Matrix& c = current[g].parameters;
                for (Index k = 0; k < p.rows(); ++k)
                    for (Index j = 0; j < p.cols(); ++j)
                        p(k, j) = c(k, j) + step * random.normal();
            }
            const Vector proposedNorms = problem.solve(proposal, m_settings.lambda);

            // Independent accept/reject per row, in log form: u < (|b'| / |b|)^gamma.
            Index accepted = 0, row = 0;
            for (std::size_t g = 0; g < current.size(); ++g)
                for (Index k = 0; k < current[g].parameters.rows(); ++k, ++row) {
                    const double u = random.uniform();
                    const double logRatio = exponent * (std::log(proposedNorms[row]) - std::log(norms[row]));
                    if (norms[row] == 0.0 || std::log(u) < logRatio) {
                        current[g].parameters.row(k) = proposal[g].parameters.row(k);
                        ++accepted;
                    }
                }
            // Amplitudes for the accepted set: the proposal's amplitudes belong to
            // rows that were partly rejected (a reference prototype lost a factor 2
            // in held-out error without this re-solve).
            norms = problem.solve(current, m_settings.lambda);
            if (m_settings.resample && resampleRows(current, norms, random))
                norms = problem.solve(current, m_settings.lambda);

            const double rate = double(accepted) / double(std::max<Index>(row, 1));
            if (iteration <= burnIn)
                step = std::clamp(step * std::exp(rate - m_settings.targetAcceptance), 1e-6 * m_settings.maxStep,
                                  m_settings.maxStep);
            progress = SamplerProgress{iteration, iterations, rate, step, problem.trainingRmse(), -1.0};
            const double error = validationOrTraining(problem, current, progress.trainingRmse);
            if (problem.hasValidation())
                progress.validationRmse = error;
            if (problem.hasValidation() && error < bestError) {
                bestError = error;
                best = current;
            }
            problem.report(progress);
        }
        if (!problem.hasValidation())
            return current;
        problem.solve(best, m_settings.lambda);
        return best;
    }

private:
    /// Multinomial resampling within each group; rows are redrawn in order,
    /// so the result depends on the seed alone. Returns whether any group
    /// was redrawn (all norms zero: nothing to draw by).
    static bool resampleRows(std::vector<FeatureGroup>& groups, const Vector& norms, Random& random)
    {
        Index offset = 0;
        bool redrawn = false;
        std::vector<double> cumulative;
        for (auto& group : groups) {
            const Index k = group.parameters.rows();
            cumulative.resize(std::size_t(k));
            double total = 0.0;
            for (Index i = 0; i < k; ++i)
                cumulative[std::size_t(i)] = total += norms[offset + i];
            offset += k;
            if (!(total > 0.0) || !std::isfinite(total))
                continue;  // no weights to draw by: keep the rows
            const Matrix previous = group.parameters;
            for (Index i = 0; i < k; ++i) {
                const double u = random.uniform() * total;
                const auto pick = std::upper_bound(cumulative.begin(), cumulative.end(), u) - cumulative.begin();
                group.parameters.row(i) = previous.row(std::min<Index>(Index(pick), k - 1));
            }
            redrawn = true;
        }
        return redrawn;
    }

    template <class Problem>
    static double validationOrTraining(Problem& problem, const std::vector<FeatureGroup>& groups, double training)
    {
        return problem.hasValidation() ? problem.validationRmse(groups) : training;
    }

    MetropolisSettings m_settings;
};

}  // namespace wavestack
