// autoFit: settings chosen on the held-out rows (train/auto_fit.hpp).

#include <doctest/doctest.h>

#include <iterator>
#include <sstream>
#include <string>
#include <vector>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/train/auto_fit.hpp>

#include "test_support.hpp"

using namespace wavestack;
namespace tf = wavestack::test_functions;

namespace {

tf::Sample borehole(Index n, std::uint64_t seed)
{
    // Harper & Gupta 1983; ranges as in Surjanovic & Bingham's library
    // (formula checked against numpy in tests/reference/test_functions_reference.py).
    Random random(seed);
    return tf::drawSample(tf::boreholeDomain(), n, random, tf::borehole);
}

double testError(const Network& network, const tf::Sample& test)
{
    return measureErrors(network.evaluateBatch(test.x).col(0), test.y.col(0)).relativeRmse;
}

}  // namespace

TEST_CASE("autoFit beats fit's fixed defaults on new data, and records what it chose")
{
    const tf::Sample train = borehole(600, 1), test = borehole(4000, 2);
    AutoFitOptions automatic;
    automatic.tuneEpochs = 0;  // keeps the test quick; tuning is checked below
    const Network chosen = autoFit(train.x, train.y, automatic);

    FitOptions fixed;  // the library's fixed defaults, same held-out split and depth
    fixed.validationFraction = automatic.validationFraction;
    fixed.layers = autoMaxLayers;
    const Network plain = fit(train.x, train.y, fixed);
    // The fixed spread 3 suits oscillatory targets, not the smooth borehole
    // function: the automatic choice is far better on 4 000 new points.
    CHECK(testError(chosen, test) < 0.1 * testError(plain, test));
    CHECK(testError(chosen, test) < 5e-3);

    const std::string& settings = chosen.record().settings;
    CHECK(settings.find("automatic: frequency stddev") != std::string::npos);
    CHECK(settings.find("automatic: lambda") != std::string::npos);
    CHECK(settings.find("automatic: input scales") != std::string::npos);
    CHECK(chosen.record().heldOutMetrics.size() == 1);
    CHECK(chosen.record().fitSeconds > 0.0);
}

TEST_CASE("settings given by the caller are kept, not chosen")
{
    const tf::Sample train = borehole(400, 3);
    AutoFitOptions automatic;
    automatic.width = 24;
    automatic.layers = 1;
    automatic.tuneEpochs = 0;
    automatic.lambda = 1e-6;
    automatic.frequencyStddev = 0.5;
    automatic.features = FeatureMix::fourier;
    const Network network = autoFit(train.x, train.y, automatic);
    CHECK(network.layers().front().groups.front().width() == 24);
    CHECK(network.residualLayerCount() <= 1);
    const std::string& settings = network.record().settings;
    CHECK(settings.find("lambda = 1e-06") != std::string::npos);
    CHECK(settings.find("frequency stddev = 0.5") != std::string::npos);
    CHECK(settings.find("automatic:") == std::string::npos);
}

TEST_CASE("same seed, same model, for any thread count; a passed time limit stops after the first layer")
{
    const tf::Sample train = borehole(300, 4), test = borehole(200, 5);
    AutoFitOptions automatic;
    automatic.tuneEpochs = 3;
    automatic.layers = 2;
    const Matrix one = autoFit(train.x, train.y, automatic).evaluateBatch(test.x);
    automatic.threads = 2;
    const Matrix two = autoFit(train.x, train.y, automatic).evaluateBatch(test.x);
    CHECK((one.array() == two.array()).all());

    automatic.timeLimit = 1e-9;  // already over when the layers start
    const Network late = autoFit(train.x, train.y, automatic);
    CHECK(late.residualLayerCount() == 0);
    CHECK(late.record().tuningHistory.size() <= 2);  // epoch 0 and at most one epoch
}

TEST_CASE("without held-out rows settings are still chosen (leave-one-out), but no residual layers are added")
{
    const tf::Sample train = borehole(200, 6);
    AutoFitOptions automatic;
    automatic.validationFraction = 0.0;
    const Network network = autoFit(train.x, train.y, automatic);
    CHECK(network.residualLayerCount() == 0);
    CHECK(network.record().settings.find("automatic: frequency stddev") != std::string::npos);
    CHECK(network.record().heldOutMetrics.empty());
}

TEST_CASE("with few rows the chosen model is refitted on every row, held-out ones included")
{
    const tf::Sample train = borehole(600, 7);
    AutoFitOptions automatic;
    automatic.tuneEpochs = 0;
    const Network network = autoFit(train.x, train.y, automatic);
    const ModelRecord& record = network.record();
    CHECK(record.settings.find("refit on all 600 rows") != std::string::npos);
    // The stored metrics come from the fit that held 120 of the 600 rows
    // out. Had that fit been kept, its RMSE over all 600 rows would be at
    // least sqrt(120/600) = 0.447 times the held-out RMSE (the held-out
    // rows alone contribute that much); the refitted model saw every row.
    REQUIRE(record.heldOutMetrics.size() == 1);
    const double allRows = measureErrors(network.evaluateBatch(train.x).col(0), train.y.col(0)).rmse;
    CHECK(allRows < 0.4 * record.heldOutMetrics[0].rmse);
}

TEST_CASE("with few rows residual layers read a narrow state group and keep a smooth fit accurate up to its edges")
{
    // Colebrook friction factor over (log10 Re, log10 eps/D): Colebrook 1939,
    // checked against scipy's brentq in tests/reference/test_functions_reference.py.
    // With width / 4 = 100 state rows on 800 training rows, residual layers fit
    // the training rows through the one-dimensional state and swing near the
    // box's edges. On this data set, fit seed 1: test relative RMSE 2.4e-4 with
    // 100 state rows, 8.6e-6 with 25 (g++ -O2; 2.9e-5 in the Release build,
    // rounding moves such fits); over 6 data sets x 2 fit seeds 1.3e-5 against
    // 2.8e-5 as geometric means, the worst 9.4e-5 against 3.2e-4 (DEVELOPERS.md,
    // "Defaults"). The suite's target (a Gaussian process, scikit-learn 1.2) is 1.9e-5.
    Random random(14);
    const tf::Sample train = tf::drawSample(tf::colebrookDomain(), 1000, random, tf::colebrook);
    const tf::Sample test = tf::drawSample(tf::colebrookDomain(), 20000, random, tf::colebrook);
    AutoFitOptions automatic;
    automatic.seed = 1;
    automatic.kernelTerm = false;  // the layers are under test here; the next test keeps the term
    const Network network = autoFit(train.x, train.y, automatic);
    REQUIRE(network.residualLayerCount() >= 1);
    CHECK(autoStateWidth(800, 400) == 25);
    for (std::size_t l = 1; l < network.layers().size(); ++l)
        for (const FeatureGroup& group : network.layers()[l].groups)
            if (group.source == FeatureSource::state)
                CHECK(group.width() == autoStateWidth(800, network.layers().front().width()));
    const double error = testError(network, test);
    MESSAGE("Colebrook, N = 1 000: test relative RMSE " << error << " with " << network.residualLayerCount()
                                                         << " residual layers");
    CHECK(error < 1.5e-4);
}

TEST_CASE("with few rows autoFit keeps a kernel term where it does better on held-out rows")
{
    // Ishigami (Ishigami & Homma 1990; formula checked against numpy in
    // tests/reference/test_functions_reference.py), N = 1 000. Kernel ridge
    // with an anisotropic Gaussian kernel is the limit random Fourier
    // features approach (Rahimi & Recht 2007); at this size it is the better
    // model. Measured: test relative RMSE 6.5e-4 with the term against
    // 1.0e-3 with feature layers only (g++ -O2); the suite's target (a
    // Gaussian process, scikit-learn 1.2) is 2.0e-4. The choice is made on
    // the 200 held-out rows and can go either way near a tie: on the
    // Colebrook data of the test above the term held out 1.59e-5 against
    // the layers' 1.45e-5 and was not kept, though the layers then gave
    // 6.6e-5 on the test points.
    Random random(15);
    const tf::Sample train = tf::drawSample(tf::ishigamiDomain(), 1000, random, tf::ishigami);
    const tf::Sample test = tf::drawSample(tf::ishigamiDomain(), 20000, random, tf::ishigami);
    AutoFitOptions automatic;
    automatic.seed = 1;
    automatic.threads = 2;
    const Network chosen = autoFit(train.x, train.y, automatic);
    automatic.kernelTerm = false;
    const Network layers = autoFit(train.x, train.y, automatic);
    const double withTerm = testError(chosen, test), without = testError(layers, test);
    MESSAGE("Ishigami, N = 1 000: test relative RMSE " << withTerm << " with the kernel term, " << without
                                                        << " with feature layers only");
    REQUIRE(chosen.kernelTerm().centreCount() == 1000);  // refitted on every row
    CHECK(chosen.record().settings.find("kernel term alone") != std::string::npos);
    CHECK(layers.kernelTerm().empty());
    CHECK(layers.record().settings.find("kernel term") == std::string::npos);
    CHECK(withTerm < 0.8 * without);
    CHECK(withTerm < 1e-3);
}

TEST_CASE("with the Metropolis sampler autoFit stays near the Gaussian default on a smooth target")
{
    // While the refit on every row ran the chain without held-out rows to
    // pick its snapshot, this fit was 33x worse than the Gaussian one (0.043
    // against 0.0013 relative RMSE). Borehole function, as above.
    const tf::Sample train = borehole(400, 5), test = borehole(4000, 6);
    AutoFitOptions automatic;
    automatic.tuneEpochs = 0;
    automatic.layers = 0;
    const double gaussian = testError(autoFit(train.x, train.y, automatic), test);
    automatic.sampler = SamplerKind::metropolis;
    const Network chained = autoFit(train.x, train.y, automatic);
    const double metropolis = testError(chained, test);
    MESSAGE("borehole, N = 400: Gaussian " << gaussian << ", Metropolis " << metropolis);
    CHECK(metropolis < 3.0 * gaussian);
    CHECK(chained.record().settings.find("refit on all") == std::string::npos);
}

TEST_CASE("on a sharp front autoFit keeps the compact Adam-tuned network when it does better on held-out rows")
{
    // An oblique tanh front in 3-D (one ridge function, Barron 1993): random
    // features at N = 1 000 leave about 9 % unexplained, above
    // autoCompactThreshold, so step 9 runs. Passing the sampler (the same
    // Gaussian default) skips steps 8 and 9 and leaves every other choice as it was.
    Vector v(3);
    v << 1.0, -2.0, 0.5;
    v.normalize();
    auto front = [&](const auto& u) { return std::tanh((u.dot(v.transpose()) - 0.2) / 0.03); };
    const testing::Sample train = testing::uniformSample(1000, 3, 21, front);
    const testing::Sample test = testing::uniformSample(4000, 3, 22, front);
    AutoFitOptions automatic;
    automatic.threads = 2;
    automatic.kernelTerm = false;  // this test is about the compact network
    const Network chosen = autoFit(train.x, train.y, automatic);
    automatic.sampler = SamplerKind::gaussian;
    const Network layered = autoFit(train.x, train.y, automatic);
    auto error = [&](const Network& n) {
        return measureErrors(n.evaluateBatch(test.x).col(0), test.y.col(0)).relativeRmse;
    };
    MESSAGE("oblique front, N = 1 000: automatic " << error(chosen) << ", layer by layer only " << error(layered));
    CHECK(chosen.record().settings.find("compact network tuned by Adam") != std::string::npos);
    CHECK(layered.record().settings.find("compact network") == std::string::npos);
    // Measured: 0.0082 against 0.086 on these 4 000 new points (the held-out
    // rows chose it; at N = 10 000 on the 3-D Si-front the gain is 1.6-4x).
    CHECK(error(chosen) < 0.3 * error(layered));
}

TEST_CASE("on a smooth target with few rows autoFit switches inert inputs off and chooses tiny lambdas")
{
    // Friedman #1 (Friedman 1991; inputs 1-5 active, 6-10 inert; formula
    // checked against numpy in tests/reference/test_functions_reference.py),
    // N = 1 000. Scored through the Gram matrix, the search could offer
    // lambda no lower than 1e-14: on the suite's data the four fit seeds gave
    // test relative RMSE 9.1e-6 to 2.5e-5; through the features' singular
    // values, with lambdas down to 1e-20, 6.5e-7 to 1.6e-6, and with the
    // inert inputs switched off 3.4e-7 to 7.2e-7 (DEVELOPERS.md, "Defaults").
    // The suite's target, a Gaussian process (scikit-learn 1.2), is 4.6e-5.
    Random random(31);
    const tf::Sample train = tf::drawSample(tf::friedman1Domain(), 1000, random, tf::friedman1);
    const tf::Sample test = tf::drawSample(tf::friedman1Domain(), 20000, random, tf::friedman1);
    AutoFitOptions automatic;
    automatic.seed = 1;
    automatic.threads = 2;
    const Network network = autoFit(train.x, train.y, automatic);
    const std::string& settings = network.record().settings;
    const auto at = settings.find("\nlambda = ");
    REQUIRE(at != std::string::npos);
    const double lambda = std::stod(settings.substr(at + 10));
    const auto scalesAt = settings.find("automatic: input scales");
    REQUIRE(scalesAt != std::string::npos);
    std::istringstream line(settings.substr(scalesAt + 23, settings.find('\n', scalesAt) - scalesAt - 23));
    std::vector<double> scales{std::istream_iterator<double>(line), std::istream_iterator<double>()};
    REQUIRE(scales.size() == 10);
    const double error = testError(network, test);
    MESSAGE("Friedman #1, N = 1 000: lambda " << lambda << ", test relative RMSE " << error << ", input scales "
                                              << settings.substr(scalesAt + 23, 80));
    // x4 and x5 enter linearly, and a linear term wants the lowest
    // frequencies: their spreads shrink below autoInertScale too (measured:
    // 0.0055 and 0.002), but switching them off costs accuracy, so they stay on.
    for (std::size_t j = 0; j < 5; ++j)
        CHECK(scales[j] > 2.0 * autoOffScale);  // active: on
    for (std::size_t j = 5; j < 10; ++j)
        CHECK(scales[j] <= 2.0 * autoOffScale);  // inert: off (printed with 6 digits)
    CHECK(lambda < 1e-14);
    CHECK(error < 4e-6);
}
