// Automatic choice of the Gaussian frequency spread (train/auto_settings.hpp).

#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/train/auto_settings.hpp>

using namespace wavestack;

namespace {

FitOptions searchOptions()
{
    FitOptions options;
    options.width = 64;
    options.validationFraction = 0.25;
    options.seed = 5;
    return options;
}

/// The held-out relative RMSE of a shallow Gaussian fit at `stddev`, computed
/// here the plain way, one fit per value, as the chooser's reference.
double heldOutError(const test_functions::Sample& data, FitOptions options, double stddev)
{
    options.frequencyStddev = stddev;
    options.inputBox = InputBox{data.x.colwise().minCoeff().transpose(), data.x.colwise().maxCoeff().transpose()};
    return fit(data.x, data.y, options).record().heldOutMetrics.front().relativeRmse;
}

}  // namespace

TEST_CASE("the spread grid spans factor-2 steps from 1/32 to 16 and holds the default")
{
    const std::vector<double> grid = frequencyStddevGrid();
    REQUIRE(grid.size() == 11);
    CHECK(grid.front() == 1.0 / 32.0);
    CHECK(grid.back() == 16.0);
    CHECK(std::count(grid.begin(), grid.end(), GaussianSampler::defaultStddev) == 1);
    CHECK(std::is_sorted(grid.begin(), grid.end()));
}

TEST_CASE("the chosen spread is the grid's best held-out value, on a smooth and on an oscillatory target")
{
    // Borehole (Harper & Gupta 1983; ranges from Surjanovic & Bingham's library)
    // is smooth; Ishigami (Ishigami & Homma 1990) oscillates with sin(x1) over
    // [-pi, pi]. Their best spreads differ by more than a factor of 8.
    Random random(3);
    const auto borehole = test_functions::drawSample(test_functions::boreholeDomain(), 800, random,
                                                     test_functions::borehole);
    const auto ishigami = test_functions::drawSample(test_functions::ishigamiDomain(), 800, random,
                                                     test_functions::ishigami);
    const FitOptions options = searchOptions();
    const double smooth = chooseFrequencyStddev(borehole.x, borehole.y, options);
    const double wavy = chooseFrequencyStddev(ishigami.x, ishigami.y, options);
    CHECK(wavy >= 8.0 * smooth);

    for (const auto* data : {&borehole, &ishigami}) {
        const double chosen = data == &borehole ? smooth : wavy;
        double best = std::numeric_limits<double>::infinity();
        for (double s : frequencyStddevGrid())
            best = std::min(best, heldOutError(*data, options, s));
        CHECK(heldOutError(*data, options, chosen) == doctest::Approx(best).epsilon(1e-12));
        // Never worse than the library's fixed default spread (on the grid by design).
        CHECK(heldOutError(*data, options, chosen) <= heldOutError(*data, options, GaussianSampler::defaultStddev));
    }
}

TEST_CASE("the search works on a row subset when the data are large, and can be cancelled")
{
    Random random(4);
    const auto data = test_functions::drawSample(test_functions::boreholeDomain(), 3000, random,
                                                 test_functions::borehole);
    FitOptions options = searchOptions();
    const double full = chooseFrequencyStddev(data.x, data.y, options);
    const double subset = chooseFrequencyStddev(data.x, data.y, options, 1500);
    // Borehole is smooth: either way the spread stays well below the default 3.
    CHECK(full <= 0.5);
    CHECK(subset <= 0.5);

    Index calls = 0;
    options.progress = [&](const FitProgress& p) {
        CHECK(p.stage == "search");
        return ++calls < 3;
    };
    CHECK_THROWS_AS(chooseFrequencyStddev(data.x, data.y, options), Cancelled);
    CHECK(calls == 3);
}
