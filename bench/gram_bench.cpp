// Gram assembly and Metropolis iteration cost, next to the machine's FMA peak
// measured in the same run. Reported GFLOP/s for the Gram matrix count
// N * P * (P + 1) flops (lower triangle, P = 2K features).
#include <string>

#include <benchmark/benchmark.h>

#include <xsimd/xsimd.hpp>

#include <wavestack/check/test_functions.hpp>
#include <wavestack/solve/gram.hpp>
#include <wavestack/train/fit.hpp>

using namespace wavestack;

namespace {

/// Double-precision FMA throughput of one core: 12 independent chains of
/// a = a * b + c on the widest xsimd batch, long enough to hide latency.
void fmaPeak(benchmark::State& state)
{
    using Batch = xsimd::batch<double>;
    constexpr int chains = 12;
    constexpr long steps = 1 << 20;
    Batch acc[chains];
    for (int c = 0; c < chains; ++c)
        acc[c] = Batch(1.0 + 1e-3 * c);
    const Batch b(0.999999), add(1e-7);
    for (auto _ : state) {
        for (long i = 0; i < steps; ++i)
            for (int c = 0; c < chains; ++c)
                acc[c] = xsimd::fma(acc[c], b, add);
        for (int c = 0; c < chains; ++c)
            benchmark::DoNotOptimize(acc[c]);
    }
    const double flops = 2.0 * Batch::size * chains * double(steps);
    state.counters["GFLOP/s"] = benchmark::Counter(flops * 1e-9, benchmark::Counter::kIsIterationInvariantRate);
    state.SetLabel(std::string("lanes=") + std::to_string(Batch::size));
}

Matrix randomFeatures(Index n, Index p)
{
    Random random(1);
    Matrix phi(n, p);
    for (Index i = 0; i < phi.size(); ++i)
        phi.data()[i] = random.normal();
    return phi;
}

/// GFLOP/s of forming the lower triangle of Phi^T Phi, N x P x (P + 1) flops per iteration.
void reportGramRate(benchmark::State& state, Index n, Index p)
{
    const double flops = double(n) * double(p) * double(p + 1);
    state.counters["GFLOP/s"] = benchmark::Counter(flops * 1e-9, benchmark::Counter::kIsIterationInvariantRate);
}

template <class Reduction>
void gramAssembly(benchmark::State& state, Reduction reduction)
{
    const Index n = 10000, p = 2 * state.range(0);
    const Matrix phi = randomFeatures(n, p);
    const Matrix r = phi.col(0);
    GramAssembler<Reduction> assembler(reduction);
    Matrix gram, rhs;
    for (auto _ : state) {
        assembler.assemble(phi, r, 1.0 / double(n), gram, rhs);
        benchmark::DoNotOptimize(gram.data());
    }
    reportGramRate(state, n, p);
    state.counters["threads"] = double(reduction.workers());
}

/// Eigen 3.4's own symmetric rank update on the same matrix, one thread:
/// what the library's kernel (detail/gram_kernel.hpp) is measured against.
void gramEigenRankUpdate(benchmark::State& state)
{
    const Index n = 10000, p = 2 * state.range(0);
    const Matrix phi = randomFeatures(n, p);
    Matrix gram(p, p);
    for (auto _ : state) {
        gram.triangularView<Eigen::Lower>().setZero();
        gram.selfadjointView<Eigen::Lower>().rankUpdate(phi.transpose(), 1.0);
        benchmark::DoNotOptimize(gram.data());
    }
    reportGramRate(state, n, p);
}

void gramSerial(benchmark::State& state) { gramAssembly(state, SerialReduction()); }
void gramTwoThreads(benchmark::State& state) { gramAssembly(state, ThreadReduction(2)); }

/// Seconds per Metropolis iteration (three solves of N = 8 000 training
/// rows: the proposal, the accepted set and the resampled set; plus a
/// held-out evaluation of 2 000 rows) on the Si-front in d = 3.
void metropolisIteration(benchmark::State& state)
{
    const Index k = state.range(0), threads = state.range(1);
    Random random(2);
    const auto [x, y] = test_functions::drawSiFront(10000, 3, 0.01, random);
    FitOptions options;
    options.width = k;
    options.sampler = SamplerKind::metropolis;
    options.validationFraction = 0.2;
    options.threads = threads;
    constexpr Index iterations = 4;
    options.metropolis.iterations = iterations;
    for (auto _ : state)
        benchmark::DoNotOptimize(fit(x, y, options).width());
    // Each fit also makes the initial draw's solve and the final solve: reported
    // per iteration, so this slightly overstates the chain's own cost.
    state.counters["s/iteration"] =
        benchmark::Counter(double(iterations), benchmark::Counter::kIsIterationInvariantRate |
                                                         benchmark::Counter::kInvert);
}

}  // namespace

BENCHMARK(fmaPeak)->Unit(benchmark::kMillisecond);
BENCHMARK(gramSerial)->Arg(128)->Arg(256)->Arg(512)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(gramTwoThreads)->Arg(128)->Arg(256)->Arg(512)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(gramEigenRankUpdate)->Arg(128)->Arg(256)->Arg(512)->Unit(benchmark::kMillisecond)->UseRealTime();
BENCHMARK(metropolisIteration)
    ->Args({128, 1})->Args({256, 1})->Args({512, 1})->Args({256, 2})
    ->Unit(benchmark::kMillisecond)->UseRealTime()->Iterations(1);
