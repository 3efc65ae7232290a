#pragma once
// The accuracy suite's cases: standard published test functions, their
// domains and the targets from general-purpose learners, and how
// bench/suite.cpp draws their data (seed 1000 * (case index + 1) for the
// test points, that plus N for the training points).

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include <wavestack/check/test_functions.hpp>

namespace wavestack::suite {

namespace tf = wavestack::test_functions;

struct Case {
    std::string name;
    tf::Domain domain;
    std::function<double(const double*)> f;
    /// Best held-out relative RMSE of general-purpose learners (scikit-learn
    /// 1.2: Gaussian process, kernel ridge, RFF + ridge, MLP, gradient
    /// boosting) at N = 1 000 and at N = 10 000, as measured for our issue
    /// tracker; bench/compare_baselines.py re-measures them on this data.
    double target1000, target10000;
};

std::vector<Case> cases()
{
    return {
        {"borehole", tf::boreholeDomain(), tf::borehole, 3.5e-4, 3.5e-4},
        {"otl_circuit", tf::otlCircuitDomain(), tf::otlCircuit, 1.2e-4, 1.2e-4},
        {"piston", tf::pistonDomain(), tf::piston, 4.3e-3, 4.3e-3},
        {"wing_weight", tf::wingWeightDomain(), tf::wingWeight, 2.5e-4, 2.5e-4},
        {"ishigami", tf::ishigamiDomain(), tf::ishigami, 2.0e-4, 1.4e-4},
        {"friedman1", tf::friedman1Domain(), tf::friedman1, 4.6e-5, 4.6e-5},
        {"sifront3", tf::siFrontDomain(3), [](const double* x) { return tf::siFront(x, 3, 0.01); }, 4.0e-2, 4.0e-2},
        {"sifront10", tf::siFrontDomain(10), [](const double* x) { return tf::siFront(x, 10, 0.01); }, 0.54, 0.205},
        {"colebrook", tf::colebrookDomain(), tf::colebrook, 1.9e-5, 1.4e-5},
    };
}

/// Test points of case `index` (20 000) and its training points (n).
inline tf::Sample testSample(const Case& c, std::size_t index)
{
    Random random(1000 * (index + 1));
    return tf::drawSample(c.domain, 20000, random, c.f);
}

inline tf::Sample trainingSample(const Case& c, std::size_t index, Index n)
{
    Random random(1000 * (index + 1) + std::uint64_t(n));
    return tf::drawSample(c.domain, n, random, c.f);
}

}  // namespace wavestack::suite
