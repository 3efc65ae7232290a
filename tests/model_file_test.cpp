// Tests of model files (io/model_file.hpp): round trips, a fixture from
// format version 1, a file built byte by byte from the documented format,
// and damaged or hostile input.
#include <doctest/doctest.h>

#include <cmath>
#include <cstdio>
#include <cstring>
#include <fstream>
#include <limits>
#include <string>
#include <vector>

#include <wavestack/wavestack.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

using Bytes = std::vector<unsigned char>;

using Data = testing::Sample;

Data sample(Index n, Index d, Index m, std::uint64_t seed)
{
    Random random(seed);
    Data data{Matrix(n, d), Matrix(n, m)};
    for (Index i = 0; i < n; ++i) {
        for (Index j = 0; j < d; ++j)
            data.x(i, j) = 2.0 * random.uniform() - 1.0;
        for (Index o = 0; o < m; ++o)
            data.y(i, o) = std::sin((o + 1.0) * data.x(i, 0)) + data.x(i, d - 1) * o;
    }
    return data;
}

Network trained(Index d, Index m, Index layers, FeatureMix mix)
{
    const Data data = sample(400, d, m, 3);
    FitOptions options;
    options.width = 12;
    options.layers = layers;
    options.features = mix;
    options.validationFraction = 0.2;
    options.inputNames.clear();
    options.tune.epochs = layers;  // the residual ones also carry a tuning curve
    return fit(data.x, data.y, options);
}

// --- an encoder written from the documented format alone ----------------
void putLe(Bytes& out, std::uint64_t v, int n)
{
    for (int i = 0; i < n; ++i)
        out.push_back(static_cast<unsigned char>(v >> (8 * i)));
}
void putF64(Bytes& out, double v)
{
    std::uint64_t bits;
    std::memcpy(&bits, &v, 8);
    putLe(out, bits, 8);
}
std::uint32_t bitwiseCrc32(const unsigned char* p, std::size_t n)
{
    // Bit-at-a-time CRC-32 (ISO 3309), independent of the library's table.
    std::uint32_t crc = 0xFFFFFFFFU;
    for (std::size_t i = 0; i < n; ++i) {
        crc ^= p[i];
        for (int k = 0; k < 8; ++k)
            crc = (crc >> 1) ^ (0xEDB88320U & (0U - (crc & 1U)));
    }
    return ~crc;
}
void putSection(Bytes& payload, const char* tag, const Bytes& body)
{
    payload.insert(payload.end(), tag, tag + 4);
    putLe(payload, body.size(), 8);
    payload.insert(payload.end(), body.begin(), body.end());
}
Bytes wrap(const Bytes& payload, std::uint32_t version = 1, std::uint32_t scalar = 8)
{
    Bytes file = {0x89, 'W', 'S', 'M', 0x0D, 0x0A, 0x1A, 0x0A};
    putLe(file, version, 4);
    putLe(file, scalar, 4);
    putLe(file, payload.size(), 8);
    putLe(file, bitwiseCrc32(payload.data(), payload.size()), 4);
    putLe(file, bitwiseCrc32(file.data(), 28), 4);
    file.insert(file.end(), payload.begin(), payload.end());
    return file;
}

/// One input (box [0, 2]), one output (mean 1, deviation 2), one Fourier
/// frequency w = 2 with amplitudes (0.5, 0.25): f(1.5) = 1 + cos 1 + 0.5 sin 1.
Bytes handWrittenPayload(double frequency = 2.0, std::uint64_t rows = 1)
{
    Bytes payload, shape, scale, layer;
    putLe(shape, 1, 4);  // d
    putLe(shape, 1, 4);  // m
    putLe(shape, 1, 4);  // layers
    putLe(shape, 0, 4);  // running prediction
    putSection(payload, "SHAP", shape);
    for (double v : {0.0, 2.0, 1.0, 2.0})  // box lower, upper; mean; deviation
        putF64(scale, v);
    putSection(payload, "SCAL", scale);
    putLe(layer, 1, 4);   // one group
    layer.push_back(0);   // Fourier
    layer.push_back(0);   // reads the input
    putLe(layer, 0, 2);   // reserved
    putLe(layer, rows, 8);
    putLe(layer, 1, 8);   // columns = d
    putF64(layer, frequency);
    putLe(layer, 2, 8);   // amplitude rows
    putF64(layer, 0.5);
    putF64(layer, 0.25);
    putSection(payload, "LAYR", layer);
    return payload;
}

void checkSameEverywhere(const Network& a, const Network& b, Index d)
{
    const Matrix x = sample(500, d, 1, 9).x * 1.3;  // also a little outside the box
    const Matrix pa = a.evaluateBatch(x), pb = b.evaluateBatch(x);
    CHECK((pa.array() == pb.array()).all());
    for (Index i = 0; i < 20; ++i) {
        const Vector xi = x.row(i).transpose();
        CHECK((a.evaluate(xi).array() == b.evaluate(xi).array()).all());
    }
    // The float evaluator is derived from the loaded double parameters, so it
    // must be bit-identical too.
    const FloatNetwork fa(a), fb(b);
    const Eigen::MatrixXf xf = x.cast<float>();
    CHECK((fa.evaluateBatch(xf).array() == fb.evaluateBatch(xf).array()).all());
    Eigen::VectorXf ya(a.outputCount()), yb(b.outputCount());
    for (Index i = 0; i < 20; ++i) {
        const Eigen::VectorXf xi = xf.row(i).transpose();
        fa.evaluate(xi.data(), ya.data());
        fb.evaluate(xi.data(), yb.data());
        CHECK((ya.array() == yb.array()).all());
    }
}

}  // namespace

TEST_CASE("CRC-32 has the standard check value")
{
    // ISO 3309 / ITU-T V.42 CRC-32 of "123456789" is 0xCBF43926 (common practice).
    const char* text = "123456789";
    CHECK(detail::crc32(reinterpret_cast<const unsigned char*>(text), 9) == 0xCBF43926U);
}

TEST_CASE("save, load, evaluate is bit-identical for shallow and residual networks, one and three outputs, double and float")
{
    for (Index m : {1, 3})
        for (Index layers : {0, 2}) {
            const Network net = trained(3, m, layers, layers == 0 ? FeatureMix::fourier : FeatureMix::both);
            const Network back = decodeModel(encodeModel(net));
            checkSameEverywhere(net, back, 3);
            CHECK(back.residualLayerCount() == net.residualLayerCount());
            CHECK(back.stateInput() == net.stateInput());
            CHECK(back.record().settings == net.record().settings);
            CHECK(back.record().history.size() == net.record().history.size());
            CHECK(back.record().tuningHistory.size() == net.record().tuningHistory.size());
            CHECK(back.record().tuningHistory.size() == std::size_t(layers == 0 ? 0 : layers + 1));
            CHECK(back.record().fitSeconds == net.record().fitSeconds);
            CHECK(net.record().fitSeconds > 0.0);
            REQUIRE(back.record().heldOutMetrics.size() == std::size_t(m));
            CHECK(back.record().heldOutMetrics[0].rmse == net.record().heldOutMetrics[0].rmse);
            CHECK(back.domain().covariance() == net.domain().covariance());
        }
}

TEST_CASE("saving goes through a temporary file and a rename; loading from a path round-trips")
{
    const Network net = trained(2, 1, 1, FeatureMix::fourier);
    const std::string path = "model_file_test_roundtrip.wsm";
    saveModel(net, path);
    CHECK(!std::ifstream(path + ".tmp"));  // nothing left behind
    checkSameEverywhere(net, loadModel(path), 2);
    std::remove(path.c_str());
    CHECK_THROWS_WITH_AS(saveModel(net, "no_such_directory/model.wsm"), doctest::Contains("cannot create"), Error);
    CHECK(!std::ifstream("no_such_directory/model.wsm"));
    CHECK_THROWS_WITH_AS(loadModel("no_such_file.wsm"), doctest::Contains("cannot open"), Error);
}

TEST_CASE("a file built byte by byte from the documented format loads and evaluates as specified")
{
    // f(1.5) = 1 + 2 (0.5 cos 1 + 0.25 sin 1) = 1.9610377982720880 (cos 1, sin 1 from memory).
    const Network net = decodeModel(wrap(handWrittenPayload()));
    Vector x(1);
    x << 1.5;
    CHECK(net.evaluate(x)[0] == doctest::Approx(1.9610377982720880).epsilon(1e-15));
    // And the library writes exactly those bytes for that network.
    CHECK(encodeModel(net) == wrap(handWrittenPayload()));
}

TEST_CASE("the version 1 fixture keeps loading")
{
    // tests/data/hand_built_v1.wsm: the hand-built residual network of
    // residual_network_test.cpp saved by format version 1. At x = 3.5:
    // 10 + 2 (cos 0.5 + 0.5 sin 1 + 0.25 cos(3 cos 0.5)) = 12.159982215719577
    // (Python's math module).
    const Network net = loadModel(WAVESTACK_TEST_DATA "/hand_built_v1.wsm");
    Vector x(1);
    x << 3.5;
    CHECK(net.evaluate(x)[0] == doctest::Approx(12.159982215719577).epsilon(1e-14));
    CHECK(net.residualLayerCount() == 1);
    CHECK(net.record().inputNames == std::vector<std::string>{"x"});
}

TEST_CASE("a kernel term is saved in a KERN section of a version 2 file and loads bit-identically")
{
    // The hand-written network plus a KERN section with one bump (width 2,
    // centre 1, weight 0.5): f(1.5) = 1 + cos 1 + 0.5 sin 1 + 0.5 exp(-1/2)
    // = 2.2643031281284047 (Python's math module).
    Bytes payload = handWrittenPayload(), kern;
    putLe(kern, 1, 8);  // one centre
    for (double v : {2.0, 1.0, 0.5})  // width, centre, weight
        putF64(kern, v);
    putSection(payload, "KERN", kern);
    const Network hand = decodeModel(wrap(payload, 2));
    Vector x(1);
    x << 1.5;
    CHECK(hand.evaluate(x)[0] == doctest::Approx(2.2643031281284047).epsilon(1e-15));
    CHECK(encodeModel(hand) == wrap(payload, 2));

    Network net = trained(2, 2, 1, FeatureMix::fourier);
    CHECK(encodeModel(net)[8] == 1);  // without a term: version 1, readable by earlier releases
    KernelTerm term;
    term.widths = Vector::Constant(2, 1.5);
    term.centres = sample(30, 2, 1, 11).x;
    term.weights = Matrix::Random(30, 2);
    net.setKernelTerm(term);
    const Bytes bytes = encodeModel(net);
    CHECK(bytes[8] == 2);  // earlier releases refuse it instead of dropping the term
    const Network back = decodeModel(bytes);
    CHECK(back.kernelTerm().centres == term.centres);
    checkSameEverywhere(net, back, 2);
    for (std::size_t n = 0; n < bytes.size(); n += 11)
        CHECK_THROWS_AS(decodeModel(bytes.data(), n), ModelFileError);

    Bytes empty = handWrittenPayload(), none;
    putLe(none, 0, 8);
    putSection(empty, "KERN", none);
    try {
        decodeModel(wrap(empty, 2));
        FAIL("no error");
    } catch (const ModelFileError& e) {
        CHECK(std::string(e.what()).find("no centres") != std::string::npos);
        CHECK(e.offset() == 32 + 28 + 44 + 68);  // header, SHAP, SCAL, LAYR: the KERN tag
    }
}

TEST_CASE("damaged files give a clear error with a byte offset, never a crash")
{
    const Bytes good = encodeModel(trained(2, 2, 1, FeatureMix::both));

    SUBCASE("every truncation")
    {
        for (std::size_t n = 0; n < good.size(); n += 7)
            CHECK_THROWS_AS(decodeModel(good.data(), n), ModelFileError);
    }
    SUBCASE("every single-bit flip")
    {
        for (std::size_t i = 0; i < good.size(); i += 3) {
            Bytes bad = good;
            bad[i] ^= static_cast<unsigned char>(1U << (i % 8));
            CHECK_THROWS_AS(decodeModel(bad), ModelFileError);
        }
    }
    SUBCASE("wrong magic")
    {
        Bytes bad = good;
        bad[1] = 'X';
        CHECK_THROWS_WITH_AS(decodeModel(bad), doctest::Contains("magic"), ModelFileError);
    }
    SUBCASE("a newer format version")
    {
        CHECK_THROWS_WITH_AS(decodeModel(wrap(handWrittenPayload(), 3)), doctest::Contains("version 3"),
                             ModelFileError);
    }
    SUBCASE("another scalar type")
    {
        CHECK_THROWS_WITH_AS(decodeModel(wrap(handWrittenPayload(), 1, 4)), doctest::Contains("scalar code 4"),
                             ModelFileError);
    }
    SUBCASE("a header claiming 2^60 frequencies allocates nothing")
    {
        try {
            decodeModel(wrap(handWrittenPayload(2.0, std::uint64_t(1) << 60)));
            FAIL("no error");
        } catch (const ModelFileError& e) {
            CHECK(std::string(e.what()).find("do not fit") != std::string::npos);
            CHECK(e.offset() > 32);
        }
    }
    SUBCASE("a NaN parameter, with its offset")
    {
        try {
            decodeModel(wrap(handWrittenPayload(std::numeric_limits<double>::quiet_NaN())));
            FAIL("no error");
        } catch (const ModelFileError& e) {
            CHECK(std::string(e.what()).find("NaN") != std::string::npos);
            // 32-byte header, SHAP (12 + 16), SCAL (12 + 32), LAYR header 12 + 4 + 4 + 16.
            CHECK(e.offset() == 32 + 28 + 44 + 36);
        }
    }
}

TEST_CASE("the training domain flags inputs outside the box and far from the data")
{
    Data data = sample(2000, 2, 1, 4);
    data.x.col(1) = 0.5 * data.x.col(0) + 0.1 * data.x.col(1);  // the data fill a thin band
    const Network net = fit(data.x, data.y);
    double y;
    const double inside[2] = {0.2, 0.1}, outsideBox[2] = {1.5, 0.0}, offBand[2] = {0.9, -0.5};
    CHECK(!net.evaluateChecked(inside, &y));
    CHECK(net.evaluateChecked(outsideBox, &y));
    CHECK(!net.evaluateChecked(offBand, &y));  // inside the box ...
    CHECK(net.domain().outside(Eigen::Map<const Vector>(offBand, 2)));  // ... but far from the data
    CHECK(!net.domain().outside(Eigen::Map<const Vector>(inside, 2)));
    for (Index i = 0; i < data.x.rows(); ++i)  // every training point is inside
        REQUIRE(!net.domain().outside(data.x.row(i).transpose()));
}

TEST_CASE("input Jacobians match central finite differences")
{
    // Central differences with h = 1e-5 have truncation error O(h^2) (common practice).
    for (auto stateInput : {StateInput::runningPrediction, StateInput::residualState}) {
        const Data data = sample(600, 3, 2, 5);
        FitOptions options;
        options.width = 16;
        options.layers = 2;
        options.features = FeatureMix::both;
        options.stateInput = stateInput;
        const Network net = fit(data.x, data.y, options);
        const double x[3] = {0.3, -0.2, 0.6};
        double y[2], jacobian[6];
        net.evaluateWithJacobian(x, y, jacobian);
        const Vector plain = net.evaluate(Eigen::Map<const Vector>(x, 3));
        CHECK(y[0] == doctest::Approx(plain[0]).epsilon(1e-13));
        for (int j = 0; j < 3; ++j) {
            double xp[3] = {x[0], x[1], x[2]}, xm[3] = {x[0], x[1], x[2]}, yp[2], ym[2];
            const double h = 1e-5;
            xp[j] += h;
            xm[j] -= h;
            net.evaluate(xp, yp);
            net.evaluate(xm, ym);
            for (int o = 0; o < 2; ++o)
                CHECK(jacobian[o * 3 + j] == doctest::Approx((yp[o] - ym[o]) / (2 * h)).epsilon(1e-6));
        }
    }
}
