// heat_treatment_demo — replace an expensive inner-loop function by a wavestack
// surrogate and measure what that costs in accuracy and buys in time.
//
// Scenario: a heat-treatment simulation follows many parts through a quench;
// per part and per time step it asks for the temperature inside a plate-like
// part, here the exact series solution for a plane wall cooled by convection
// (examples/plane_wall.hpp). Each call solves for the series' eigenvalues, so
// it costs about half a microsecond. The demo
//   1. samples the series over the box the simulation needs (Latin hypercube
//      for training, independent uniform random points held out for testing),
//   2. fits a surrogate with wavestack::fit,
//   3. reports the error on the held-out points and the time per call of the
//      series and of the surrogate, measured in this run,
//   4. writes predictions.csv, true_vs_predicted.svg and summary.txt.
//
// Usage: heat_treatment_demo [output_dir]     (default: ./heat_treatment_out)
#include <wavestack/wavestack.hpp>

#include "plane_wall.hpp"

#include <algorithm>
#include <array>
#include <chrono>
#include <cmath>
#include <cstdint>
#include <exception>
#include <filesystem>
#include <fstream>
#include <iomanip>
#include <iostream>
#include <limits>
#include <numeric>
#include <sstream>
#include <stdexcept>
#include <string>
#include <utility>
#include <vector>

namespace {

using wavestack::Index;
using wavestack::Matrix;
using wavestack::Vector;

// --------------------------------------------------------------------------
// The problem: model inputs are (x*, log10 Bi, Fo); the output is theta.
// --------------------------------------------------------------------------

constexpr Index kInputCount = 3;
using Point = std::array<double, kInputCount>; // x*, log10 Bi, Fo

/// The training domain. Bi spans 0.1 to 31.6, so it enters on a log scale,
/// where theta varies about evenly.
wavestack::InputBox trainingDomain()
{
    wavestack::InputBox box;
    box.lower = Vector(kInputCount);
    box.upper = Vector(kInputCount);
    box.lower << 0.0, -1.0, 0.05;
    box.upper << 1.0, 1.5, 2.0;
    return box;
}

std::string describeDomain(const wavestack::InputBox& box)
{
    std::ostringstream text;
    text << "x* in [" << box.lower[0] << ", " << box.upper[0] << "], log10(Bi) in [" << box.lower[1]
         << ", " << box.upper[1] << "] (Bi " << std::pow(10.0, box.lower[1]) << " to "
         << std::setprecision(3) << std::pow(10.0, box.upper[1]) << std::setprecision(6)
         << "), Fo in [" << box.lower[2] << ", " << box.upper[2] << "]";
    return text.str();
}

bool insideDomain(const wavestack::InputBox& box, const Point& point)
{
    for (Index j = 0; j < kInputCount; ++j)
        if (!(point[j] >= box.lower[j] && point[j] <= box.upper[j]))
            return false;
    return true;
}

/// The expensive function, in the model's input coordinates.
double seriesTemperature(const Point& point)
{
    return plane_wall::temperature(point[0], std::pow(10.0, point[1]), point[2]);
}

Point rowOf(const Matrix& inputs, Index row)
{
    return {inputs(row, 0), inputs(row, 1), inputs(row, 2)};
}

Vector seriesTemperatures(const Matrix& inputs)
{
    Vector theta(inputs.rows());
    for (Index i = 0; i < inputs.rows(); ++i)
        theta[i] = seriesTemperature(rowOf(inputs, i));
    return theta;
}

// --------------------------------------------------------------------------
// Sampling designs (rows = points), drawn from wavestack's seeded generator.
// --------------------------------------------------------------------------

/// Latin hypercube: each input's range is cut into `count` equal strata, every
/// stratum holds exactly one point, and the strata are paired across inputs by
/// independent random permutations (McKay, Beckman & Conover, 1979).
Matrix latinHypercube(Index count, const wavestack::InputBox& box, wavestack::Random& random)
{
    Matrix points(count, kInputCount);
    std::vector<Index> strata(static_cast<std::size_t>(count));
    for (Index j = 0; j < kInputCount; ++j) {
        std::iota(strata.begin(), strata.end(), Index{0});
        for (Index i = count - 1; i > 0; --i) { // Fisher-Yates shuffle
            const auto other = static_cast<Index>(random.uniform() * static_cast<double>(i + 1));
            std::swap(strata[static_cast<std::size_t>(i)], strata[static_cast<std::size_t>(other)]);
        }
        const double width = box.upper[j] - box.lower[j];
        for (Index i = 0; i < count; ++i) {
            const double unit = (static_cast<double>(strata[static_cast<std::size_t>(i)]) + random.uniform())
                                / static_cast<double>(count);
            points(i, j) = box.lower[j] + width * unit;
        }
    }
    return points;
}

Matrix uniformSample(Index count, const wavestack::InputBox& box, wavestack::Random& random)
{
    Matrix points(count, kInputCount);
    for (Index i = 0; i < count; ++i)
        for (Index j = 0; j < kInputCount; ++j)
            points(i, j) = box.lower[j] + (box.upper[j] - box.lower[j]) * random.uniform();
    return points;
}

// --------------------------------------------------------------------------
// The host side: how a simulation would call the surrogate.
// --------------------------------------------------------------------------

/// Physical inputs as the simulation holds them.
struct PhysicalPoint {
    double xStar, biot, fourier;
};

std::vector<PhysicalPoint> physicalPoints(const Matrix& inputs, Index count)
{
    std::vector<PhysicalPoint> points;
    for (Index i = 0; i < std::min(count, inputs.rows()); ++i)
        points.push_back({inputs(i, 0), std::pow(10.0, inputs(i, 1)), inputs(i, 2)});
    return points;
}

/// theta from the surrogate inside its training domain, from the series outside
/// it: the surrogate is never trusted where it has seen no data.
double surrogateOrSeries(const wavestack::Network& network, const wavestack::InputBox& domain,
                         const PhysicalPoint& point)
{
    const Point input{point.xStar, std::log10(point.biot), point.fourier};
    if (!insideDomain(domain, input))
        return plane_wall::temperature(point.xStar, point.biot, point.fourier);
    double theta;
    network.evaluate(input.data(), &theta);
    return theta;
}

// --------------------------------------------------------------------------
// Timing: steady_clock over whole passes through a fixed set of points, in
// several rounds; the fastest round is reported, being the one least disturbed
// by other work on the machine. Results are summed into a sink the compiler
// must produce, so no call can be optimised away.
// --------------------------------------------------------------------------

struct Timing {
    double nanosecondsPerCall = 0.0; ///< fastest round
    Index calls = 0;                 ///< over all rounds
};

constexpr int kTimingRounds = 5;

/// Times `pass()`, which does `callsPerPass` calls and returns a checksum,
/// for at least `minimumSeconds` in total.
template <class Pass>
Timing timePasses(Pass pass, Index callsPerPass, double minimumSeconds)
{
    using Clock = std::chrono::steady_clock;
    double sum = pass(); // warm-up: caches, branch predictors
    Timing timing;
    timing.nanosecondsPerCall = std::numeric_limits<double>::infinity();
    for (int round = 0; round < kTimingRounds; ++round) {
        Index calls = 0;
        double seconds = 0.0;
        const auto start = Clock::now();
        do {
            sum += pass();
            calls += callsPerPass;
            seconds = std::chrono::duration<double>(Clock::now() - start).count();
        } while (seconds < minimumSeconds / kTimingRounds);
        timing.nanosecondsPerCall = std::min(timing.nanosecondsPerCall, 1e9 * seconds / static_cast<double>(calls));
        timing.calls += calls;
    }
    volatile double sink = sum;
    (void)sink;
    return timing;
}

/// Single-point calls `call(point)` over `points`.
template <class Points, class Call>
Timing timePerCall(const Points& points, Call call, double minimumSeconds)
{
    auto pass = [&]() {
        double sum = 0.0;
        for (const auto& point : points)
            sum += call(point);
        return sum;
    };
    return timePasses(pass, static_cast<Index>(points.size()), minimumSeconds);
}

/// Network::evaluateBatch over all rows of `inputs`; time per point.
Timing timeBatchPerPoint(const wavestack::Network& network, const Matrix& inputs, double minimumSeconds)
{
    return timePasses([&]() { return network.evaluateBatch(inputs).sum(); }, inputs.rows(), minimumSeconds);
}

// --------------------------------------------------------------------------
// Output files.
// --------------------------------------------------------------------------

std::ofstream openForWriting(const std::filesystem::path& path)
{
    std::ofstream file(path);
    if (!file)
        throw std::runtime_error("cannot open " + path.string() + " for writing");
    return file;
}

void writePredictionsCsv(const std::filesystem::path& path, const Matrix& inputs, const Vector& series,
                         const Vector& surrogate, Index rows)
{
    std::ofstream file = openForWriting(path);
    file << "x_star,log10_biot,fourier,theta_series,theta_surrogate,abs_error\n";
    file << std::setprecision(17);
    for (Index i = 0; i < std::min(rows, inputs.rows()); ++i)
        file << inputs(i, 0) << ',' << inputs(i, 1) << ',' << inputs(i, 2) << ',' << series[i] << ','
             << surrogate[i] << ',' << std::abs(surrogate[i] - series[i]) << '\n';
}

/// A self-contained SVG scatter plot of surrogate against series for the first
/// `points` held-out points, with the y = x line, ticks every 0.2 and the
/// relative RMSE over all held-out points in the title.
void writeScatterSvg(const std::filesystem::path& path, const Vector& series, const Vector& surrogate,
                     Index points, double relativeRmse)
{
    const Index count = std::min(points, series.size());
    const double low = std::min({0.0, series.head(count).minCoeff(), surrogate.head(count).minCoeff()});
    const double high = std::max({1.0, series.head(count).maxCoeff(), surrogate.head(count).maxCoeff()});
    const double pad = 0.02 * (high - low);
    const double axisLow = low - pad, axisHigh = high + pad;

    const double size = 640.0, left = 80.0, right = 20.0, top = 62.0, bottom = 60.0;
    const double plot = size - left - right; // square plotting area
    auto toX = [&](double v) { return left + plot * (v - axisLow) / (axisHigh - axisLow); };
    auto toY = [&](double v) { return top + plot * (axisHigh - v) / (axisHigh - axisLow); };

    std::ofstream file = openForWriting(path);
    file << std::fixed << std::setprecision(2);
    file << "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"" << size << "\" height=\""
         << top + plot + bottom << "\" font-family=\"sans-serif\" font-size=\"13\">\n";
    file << "<rect width=\"100%\" height=\"100%\" fill=\"white\"/>\n";
    file << "<text x=\"" << left + plot / 2 << "\" y=\"24\" text-anchor=\"middle\" font-size=\"15\">"
         << "Plane wall cooled by convection: surrogate vs. exact series</text>\n"
         << "<text x=\"" << left + plot / 2 << "\" y=\"46\" text-anchor=\"middle\">"
         << "held-out relative RMSE " << std::setprecision(3) << 100.0 * relativeRmse << "% ("
         << series.size() << " points, " << count << " shown)</text>\n"
         << std::setprecision(2);
    file << "<rect x=\"" << left << "\" y=\"" << top << "\" width=\"" << plot << "\" height=\"" << plot
         << "\" fill=\"none\" stroke=\"black\"/>\n";

    for (int tick = static_cast<int>(std::ceil(axisLow / 0.2 - 1e-9));
         tick * 0.2 <= axisHigh + 1e-9; ++tick) {
        const double value = tick * 0.2;
        const double x = toX(value), y = toY(value);
        file << "<line x1=\"" << x << "\" y1=\"" << top + plot << "\" x2=\"" << x << "\" y2=\""
             << top + plot + 6 << "\" stroke=\"black\"/>\n"
             << "<text x=\"" << x << "\" y=\"" << top + plot + 21 << "\" text-anchor=\"middle\">"
             << std::setprecision(1) << value << std::setprecision(2) << "</text>\n"
             << "<line x1=\"" << left - 6 << "\" y1=\"" << y << "\" x2=\"" << left << "\" y2=\"" << y
             << "\" stroke=\"black\"/>\n"
             << "<text x=\"" << left - 10 << "\" y=\"" << y + 4 << "\" text-anchor=\"end\">"
             << std::setprecision(1) << value << std::setprecision(2) << "</text>\n";
    }
    file << "<text x=\"" << left + plot / 2 << "\" y=\"" << top + plot + 45
         << "\" text-anchor=\"middle\">theta, exact series (Incropera &amp; DeWitt 5.5)</text>\n";
    file << "<text transform=\"translate(" << left - 50 << ',' << top + plot / 2
         << ") rotate(-90)\" text-anchor=\"middle\">theta, wavestack surrogate</text>\n";

    file << "<line x1=\"" << toX(axisLow) << "\" y1=\"" << toY(axisLow) << "\" x2=\"" << toX(axisHigh)
         << "\" y2=\"" << toY(axisHigh) << "\" stroke=\"#d62728\" stroke-width=\"1\"/>\n";
    file << "<g fill=\"#1f77b4\" fill-opacity=\"0.5\">\n";
    for (Index i = 0; i < count; ++i)
        file << "<circle cx=\"" << toX(series[i]) << "\" cy=\"" << toY(surrogate[i]) << "\" r=\"1.6\"/>\n";
    file << "</g>\n";
    file << "<text x=\"" << left + 12 << "\" y=\"" << top + 20 << "\" fill=\"#d62728\">y = x</text>\n";
    file << "</svg>\n";
}

// --------------------------------------------------------------------------
// The demo.
// --------------------------------------------------------------------------

/// Settings chosen by a study on a separate validation sample (never on the
/// held-out points): see the comment in heatTreatmentSettings().
struct DemoSettings {
    Index trainingCount = 4000;
    Index heldOutCount = 20000;
    std::uint64_t trainingSeed = 2024;
    std::uint64_t heldOutSeed = 7;
    wavestack::FitOptions fit;
    Index csvRows = 2000;
    Index plotPoints = 2000;
    Index timingPoints = 2048;
    double timingSeconds = 0.25;
};

DemoSettings heatTreatmentSettings()
{
    DemoSettings settings;
    // Chosen by a sweep on 20 000 validation points drawn with another seed
    // (never the held-out points); relative RMSE averaged over 5 fitting seeds,
    // time per single-point call on the development machine (series ~490 ns):
    //   width 32: 2.4%, ~130 ns | width 48: 1.7%, ~200 ns | width 64: 1.2%, ~270 ns
    //   width 128: 0.5%, ~480 ns | width 192: 0.3%, ~750 ns.
    // Cost grows ~linearly with width, error falls roughly as 1/width, so 48 is
    // the most accurate width that is still at least twice as fast as the
    // series. lambda matters little below 1e-10 (the error is bias, not noise);
    // narrow networks prefer a smaller frequency spread than the default.
    settings.fit.width = 48;
    settings.fit.frequencyStddev = 1.0;
    settings.fit.lambda = 1e-12;
    settings.fit.seed = 1;
    settings.fit.inputBox = trainingDomain();
    return settings;
}

struct Results {
    wavestack::ErrorMetrics heldOut;
    double fitSeconds = 0.0;
    double heldOutStddev = 0.0;
    Timing series, surrogate, surrogateRaw, batch;
};

std::string formatReport(const DemoSettings& settings, const Results& results,
                         const std::filesystem::path& directory)
{
    const wavestack::InputBox domain = trainingDomain();
    std::ostringstream text;
    text << "wavestack heat-treatment demo: plane wall cooled by convection\n\n"
         << "Fitted: theta(x*, log10 Bi, Fo), the dimensionless temperature of a plane wall\n"
         << "  (exact series solution, Incropera & DeWitt, section 5.5), over\n"
         << "  " << describeDomain(domain) << "\n"
         << "  training data: " << settings.trainingCount << " Latin-hypercube points (seed "
         << settings.trainingSeed << ")\n"
         << "  model: shallow random-Fourier-feature network, width " << settings.fit.width
         << " frequencies, Gaussian frequency stddev " << settings.fit.frequencyStddev << ", lambda "
         << settings.fit.lambda << "; fitted in " << std::setprecision(3) << results.fitSeconds << " s\n\n";

    text << "Error on " << settings.heldOutCount
         << " held-out points (uniform random, seed " << settings.heldOutSeed << ", never used in fitting):\n"
         << std::setprecision(3)
         << "  max abs error   " << results.heldOut.maxAbsError << "  (theta is in (0, 1])\n"
         << "  RMSE            " << results.heldOut.rmse << "\n"
         << "  relative RMSE   " << results.heldOut.relativeRmse << "  (RMSE / std of held-out theta = "
         << results.heldOut.rmse << " / " << results.heldOutStddev << ")\n"
         << "  R^2             " << std::setprecision(8) << results.heldOut.rSquared << "\n\n";

    const double speedUp = results.series.nanosecondsPerCall / results.surrogate.nanosecondsPerCall;
    text << std::fixed << std::setprecision(1)
         << "Time per call, single point (steady_clock, >= " << std::setprecision(2) << settings.timingSeconds
         << " s each, fastest of " << kTimingRounds << " rounds):\n" << std::setprecision(1)
         << "  exact series                        " << std::setw(8) << results.series.nanosecondsPerCall
         << " ns/call  (" << results.series.calls << " calls)\n"
         << "  surrogate, as the host calls it     " << std::setw(8) << results.surrogate.nanosecondsPerCall
         << " ns/call  (log10 Bi, domain check, evaluate)\n"
         << "  surrogate, Network::evaluate only   " << std::setw(8)
         << results.surrogateRaw.nanosecondsPerCall << " ns/call\n"
         << "  speed-up (series / host call)       " << std::setw(8) << speedUp << " x\n"
         << "  surrogate, batched (evaluateBatch)  " << std::setw(8) << results.batch.nanosecondsPerCall
         << " ns/point\n\n"
         << std::defaultfloat << std::setprecision(6);

    text << "Files written:\n"
         << "  " << (directory / "predictions.csv").string() << "  (first " << settings.csvRows
         << " held-out points)\n"
         << "  " << (directory / "true_vs_predicted.svg").string() << "\n"
         << "  " << (directory / "summary.txt").string() << "\n\n";

    text << "Validity: the surrogate is an approximation, valid only inside its training domain\n"
         << "  " << describeDomain(domain) << ";\n"
         << "  outside it the host must call the exact series (surrogateOrSeries() does).\n"
         << "  Engineering decisions, e.g. heat-treatment schedules, defer to the applicable\n"
         << "  codes and licensed engineering practice, not to this model.\n";
    return text.str();
}

struct DataSet {
    Matrix inputs; ///< rows = points: x*, log10 Bi, Fo
    Vector theta;  ///< the series at each row
};

DataSet trainingData(const DemoSettings& settings, const wavestack::InputBox& domain)
{
    wavestack::Random random(settings.trainingSeed);
    DataSet data{latinHypercube(settings.trainingCount, domain, random), {}};
    data.theta = seriesTemperatures(data.inputs);
    return data;
}

DataSet heldOutData(const DemoSettings& settings, const wavestack::InputBox& domain)
{
    wavestack::Random random(settings.heldOutSeed);
    DataSet data{uniformSample(settings.heldOutCount, domain, random), {}};
    data.theta = seriesTemperatures(data.inputs);
    return data;
}

/// Single-point timings of the series and the surrogate on the same points,
/// and the batched surrogate on all held-out points.
void measureTimings(const wavestack::Network& network, const wavestack::InputBox& domain,
                    const Matrix& heldOutInputs, const DemoSettings& settings, Results& results)
{
    const std::vector<PhysicalPoint> physical = physicalPoints(heldOutInputs, settings.timingPoints);
    std::vector<Point> model;
    for (Index i = 0; i < std::min(settings.timingPoints, heldOutInputs.rows()); ++i)
        model.push_back(rowOf(heldOutInputs, i));

    results.series = timePerCall(
        physical, [](const PhysicalPoint& p) { return plane_wall::temperature(p.xStar, p.biot, p.fourier); },
        settings.timingSeconds);
    results.surrogate = timePerCall(
        physical, [&](const PhysicalPoint& p) { return surrogateOrSeries(network, domain, p); },
        settings.timingSeconds);
    results.surrogateRaw = timePerCall(
        model,
        [&](const Point& p) {
            double theta;
            network.evaluate(p.data(), &theta);
            return theta;
        },
        settings.timingSeconds);
    results.batch = timeBatchPerPoint(network, heldOutInputs, settings.timingSeconds);
}

int run(const std::filesystem::path& directory)
{
    const DemoSettings settings = heatTreatmentSettings();
    const wavestack::InputBox domain = trainingDomain();
    std::filesystem::create_directories(directory);

    const DataSet training = trainingData(settings, domain);
    const DataSet heldOut = heldOutData(settings, domain);

    Results results;
    const auto fitStart = std::chrono::steady_clock::now();
    const wavestack::Network network = wavestack::fit(training.inputs, training.theta, settings.fit);
    results.fitSeconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - fitStart).count();

    const Vector predicted = network.evaluateBatch(heldOut.inputs).col(0);
    results.heldOut = wavestack::measureErrors(predicted, heldOut.theta);
    results.heldOutStddev = std::sqrt((heldOut.theta.array() - heldOut.theta.mean()).square().mean());
    measureTimings(network, domain, heldOut.inputs, settings, results);

    writePredictionsCsv(directory / "predictions.csv", heldOut.inputs, heldOut.theta, predicted, settings.csvRows);
    writeScatterSvg(directory / "true_vs_predicted.svg", heldOut.theta, predicted, settings.plotPoints,
                    results.heldOut.relativeRmse);
    const std::string report = formatReport(settings, results, directory);
    openForWriting(directory / "summary.txt") << report;
    std::cout << report;
    return 0;
}

} // namespace

int main(int argc, char** argv)
{
    if (argc > 2) {
        std::cerr << "usage: " << argv[0] << " [output_dir]   (default: heat_treatment_out)\n";
        return 2;
    }
    wavestack::retainFreedMemory();  // training runs faster (core/allocator.hpp)
    try {
        return run(argc == 2 ? std::filesystem::path(argv[1]) : std::filesystem::path("heat_treatment_out"));
    } catch (const std::exception& error) {
        std::cerr << "heat_treatment_demo: " << error.what() << '\n';
        return 1;
    }
}
