// Evaluation speed: ns per point, single point and batched, for residual
// Fourier networks of shape (d, K, L) = (inputs, frequencies per layer,
// residual layers), next to a plain scalar loop (std::sin / std::cos, no
// SIMD) over the same parameters, measured in the same run.
#include <benchmark/benchmark.h>

#include <cmath>
#include <thread>
#include <type_traits>
#include <vector>

#include <wavestack/model/float_network.hpp>
#include <wavestack/model/network.hpp>

using namespace wavestack;

namespace {

/// A random network of the given shape: each layer has K input frequencies;
/// residual layers also have K / 4 state frequencies. One output.
Network randomNetwork(Index d, Index k, Index residualLayers)
{
    Random random(42);
    auto randomMatrix = [&](Index rows, Index cols, double scale) {
        Matrix a(rows, cols);
        for (Index i = 0; i < a.size(); ++i)
            a.data()[i] = scale * random.normal();
        return a;
    };
    std::vector<Layer> layers;
    for (Index l = 0; l <= residualLayers; ++l) {
        Layer layer;
        layer.groups.push_back(FeatureGroup{FeatureKind::fourier, randomMatrix(k, d, 3.0), FeatureSource::input});
        if (l > 0)
            layer.groups.push_back(
                FeatureGroup{FeatureKind::fourier, randomMatrix(k / 4, 1, 1.0), FeatureSource::state});
        layer.amplitudes = randomMatrix(layer.featureCount(), 1, 1.0 / double(k));
        layers.push_back(std::move(layer));
    }
    return Network(InputScaler(InputBox{Vector::Constant(d, -1.0), Vector::Constant(d, 1.0)}),
                   OutputScaler(Vector::Zero(1), Vector::Ones(1)), std::move(layers));
}

/// The same network evaluated the plain way, in T (double or float): scale,
/// then for each row std::cos / std::sin and a running sum, layer by layer.
template <class T>
T scalarReference(const Network& net, const T* x)
{
    const Index d = net.inputCount();
    std::vector<T> u(static_cast<std::size_t>(d));
    for (Index j = 0; j < d; ++j)
        u[std::size_t(j)] = T(net.inputScaler().scale()[j]) * x[j] + T(net.inputScaler().offset()[j]);
    T f0 = 0, z = 0;
    for (std::size_t l = 0; l < net.layers().size(); ++l) {
        const Layer& layer = net.layers()[l];
        const T s = f0 + z;  // running prediction
        T add = 0;
        Index row = 0;
        for (const FeatureGroup& group : layer.groups) {
            const Index k = group.width();
            for (Index i = 0; i < k; ++i) {
                T angle = 0;
                if (group.source == FeatureSource::input)
                    for (Index j = 0; j < d; ++j)
                        angle += T(group.parameters(i, j)) * u[std::size_t(j)];
                else
                    angle = T(group.parameters(i, 0)) * s;
                add += T(layer.amplitudes(row + i, 0)) * std::cos(angle) +
                       T(layer.amplitudes(row + k + i, 0)) * std::sin(angle);
            }
            row += 2 * k;
        }
        (l == 0 ? f0 : z) += add;
    }
    return f0 + z;
}

Matrix points(Index n, Index d)
{
    Random random(7);
    Matrix x(n, d);
    for (Index i = 0; i < x.size(); ++i)
        x.data()[i] = 2.0 * random.uniform() - 1.0;
    return x;
}


/// The network type that evaluates in T.
template <class T>
using NetworkIn = std::conditional_t<std::is_same_v<T, float>, FloatNetwork, Network>;
template <class T>
using MatrixIn = Eigen::Matrix<T, Eigen::Dynamic, Eigen::Dynamic>;

template <class T>
void single(benchmark::State& state)
{
    const NetworkIn<T> net(randomNetwork(state.range(0), state.range(1), state.range(2)));
    const MatrixIn<T> x = points(1024, net.inputCount()).transpose().template cast<T>();  // column i is point i
    T y, sink = 0;
    Index i = 0;
    for (auto _ : state) {
        net.evaluate(&x(0, i), &y);
        sink += y;
        i = (i + 1) & 1023;
    }
    benchmark::DoNotOptimize(sink);
}

template <class T>
void scalar(benchmark::State& state)
{
    const Network net = randomNetwork(state.range(0), state.range(1), state.range(2));
    const MatrixIn<T> x = points(1024, net.inputCount()).transpose().template cast<T>();
    T sink = 0;
    Index i = 0;
    for (auto _ : state) {
        sink += scalarReference<T>(net, &x(0, i));
        i = (i + 1) & 1023;
    }
    benchmark::DoNotOptimize(sink);
}

void batchedFloat(benchmark::State& state)
{
    const FloatNetwork net(randomNetwork(state.range(0), state.range(1), state.range(2)));
    const Index n = 4096;
    const Eigen::MatrixXf x = points(n, net.inputCount()).cast<float>();
    Eigen::MatrixXf y;
    for (auto _ : state) {
        y = net.evaluateBatch(x);
        benchmark::DoNotOptimize(y.data());
    }
    state.SetItemsProcessed(state.iterations() * n);
}

void batched(benchmark::State& state)
{
    const Network net = randomNetwork(state.range(0), state.range(1), state.range(2));
    const Index threads = state.range(3);
    const Index n = 4096;
    const Matrix x = points(n, net.inputCount());
    Matrix y(n, 1);
    for (auto _ : state) {
        if (threads == 1) {
            y = net.evaluateBatch(x);
        } else {
            std::vector<std::thread> pool;
            for (Index t = 0; t < threads; ++t)
                pool.emplace_back([&, t] {
                    const Index begin = n * t / threads, end = n * (t + 1) / threads;
                    y.middleRows(begin, end - begin) = net.evaluateBatch(x.middleRows(begin, end - begin));
                });
            for (auto& thread : pool)
                thread.join();
        }
        benchmark::DoNotOptimize(y.data());
    }
    state.SetItemsProcessed(state.iterations() * n);
}

}  // namespace

// Time per iteration = ns per point for single and scalar; batched reports items/s.
BENCHMARK_TEMPLATE(scalar, double)->Args({2, 64, 2})->Args({8, 256, 4})->Args({10, 512, 5});
BENCHMARK_TEMPLATE(single, double)->Args({2, 64, 2})->Args({8, 256, 4})->Args({10, 512, 5});
BENCHMARK_TEMPLATE(scalar, float)->Args({2, 64, 2})->Args({8, 256, 4})->Args({10, 512, 5});
BENCHMARK_TEMPLATE(single, float)->Args({2, 64, 2})->Args({8, 256, 4})->Args({10, 512, 5});
BENCHMARK(batchedFloat)->Args({2, 64, 2})->Args({8, 256, 4})->Args({10, 512, 5})->UseRealTime();
BENCHMARK(batched)
    ->Args({2, 64, 2, 1})->Args({8, 256, 4, 1})->Args({10, 512, 5, 1})
    ->Args({8, 256, 4, 2})->Args({10, 512, 5, 2})
    ->UseRealTime();
