// Tests of host-side evaluation guarantees: the out-of-domain fallback
// (model/guarded_network.hpp), no allocation in single-point evaluation, and
// thread safety of evaluation.
#include <doctest/doctest.h>

#include <atomic>
#include <cmath>
#include <cstdlib>
#include <new>
#include <thread>
#include <vector>

#include <wavestack/wavestack.hpp>

// Counting global allocator for this test program: every operator new
// (any thread) increments the counter. new and delete are both replaced
// (malloc/free), which GCC's -Wmismatched-new-delete cannot see.
#if defined(__GNUC__) && !defined(__clang__)
#pragma GCC diagnostic ignored "-Wmismatched-new-delete"
#endif
namespace {
std::atomic<long> allocations{0};
}
void* operator new(std::size_t size)
{
    allocations.fetch_add(1, std::memory_order_relaxed);
    if (void* p = std::malloc(size ? size : 1))
        return p;
    throw std::bad_alloc();
}
void operator delete(void* p) noexcept { std::free(p); }
void operator delete(void* p, std::size_t) noexcept { std::free(p); }

using namespace wavestack;

namespace {

Network deepNetwork(Index d, Index m)
{
    Random random(1);
    Matrix x(800, d), y(800, m);
    for (Index i = 0; i < x.size(); ++i)
        x.data()[i] = 2.0 * random.uniform() - 1.0;
    for (Index i = 0; i < 800; ++i)
        for (Index o = 0; o < m; ++o)
            y(i, o) = std::sin(2.0 * x(i, 0) + o) * x(i, d - 1);
    FitOptions options;
    options.width = 150;  // more than one stack chunk of 128 rows
    options.layers = 2;
    options.features = FeatureMix::both;
    return fit(x, y, options);
}

double exactModel(const double* x) { return std::sin(2.0 * x[0]) * x[2]; }

}  // namespace

TEST_CASE("single-point evaluation allocates nothing")
{
    const Network net = deepNetwork(3, 2);
    double x[3] = {0.1, 0.2, 0.3}, y[2];
    const FloatNetwork single(net);
    float xf[3] = {0.1f, 0.2f, 0.3f}, yf[2];
    const long before = allocations.load();
    for (int i = 0; i < 1000; ++i) {
        x[0] = -0.9 + 0.0018 * i;
        xf[0] = float(x[0]);
        net.evaluate(x, y);
        net.evaluateChecked(x, y);
        single.evaluate(xf, yf);
    }
    CHECK(allocations.load() - before == 0);
}

TEST_CASE("evaluation from eight threads gives the serial results")
{
    const Network net = deepNetwork(3, 2);
    Random random(2);
    Matrix x(4000, 3);
    for (Index i = 0; i < x.size(); ++i)
        x.data()[i] = 2.0 * random.uniform() - 1.0;
    const Matrix serial = net.evaluateBatch(x);
    std::vector<Matrix> results(8, Matrix(x.rows(), 2));
    std::vector<std::thread> threads;
    for (int t = 0; t < 8; ++t)
        threads.emplace_back([&, t] {
            for (Index i = 0; i < x.rows(); ++i) {
                const Vector point = x.row(i).transpose();
                results[std::size_t(t)].row(i) = net.evaluate(point).transpose();
            }
            if (t % 2 == 0)  // half the threads also run the batch path
                results[std::size_t(t)] = net.evaluateBatch(x);
        });
    for (auto& thread : threads)
        thread.join();
    const double scale = serial.cwiseAbs().maxCoeff();
    for (const Matrix& r : results)
        CHECK((r - serial).cwiseAbs().maxCoeff() <= 1e-13 * scale);
}

TEST_CASE("the guard evaluates the network inside the domain and the fallback outside, counting both")
{
    Random random(3);
    Matrix x(1000, 3), y(1000, 1);
    for (Index i = 0; i < 1000; ++i) {
        double point[3];
        for (Index j = 0; j < 3; ++j)
            point[j] = x(i, j) = random.uniform();  // training box [0, 1]^3
        y(i, 0) = exactModel(point);
    }
    const Network net = fit(x, y);
    auto fallback = [](const double* point, double* value) { value[0] = exactModel(point); };
    const GuardedNetwork guarded(net, fallback);
    double value;
    const double inside[3] = {0.5, 0.5, 0.5}, outside[3] = {1.5, 0.5, 0.5};
    CHECK(!guarded(inside, &value));
    CHECK(std::abs(value - exactModel(inside)) < 1e-3);
    CHECK(guarded(outside, &value));
    CHECK(value == exactModel(outside));
    CHECK(guarded.calls() == 2);
    CHECK(guarded.fallbacks() == 1);

    const Network bare(net.inputScaler(), net.outputScaler(), net.layer());  // no domain
    CHECK_THROWS_AS(GuardedNetwork(bare, fallback), InvalidInput);
}
