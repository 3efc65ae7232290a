// Tests of the Fourier feature map (features/fourier_map.hpp); its sine and
// cosine kernel is checked in sincos_test.cpp.
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/core/random.hpp>
#include <wavestack/features/feature_group.hpp>

using namespace wavestack;

TEST_CASE("the feature matrix holds cosines then sines of w_k . u")
{
    Random random(4);
    const Index n = 37, d = 3, k = 5;
    Matrix u(n, d), w(k, d);
    for (Index i = 0; i < n; ++i)
        for (Index j = 0; j < d; ++j)
            u(i, j) = 2.0 * random.uniform() - 1.0;
    for (Index i = 0; i < k; ++i)
        for (Index j = 0; j < d; ++j)
            w(i, j) = 3.0 * random.normal();
    const FeatureGroup group{FeatureKind::fourier, w};
    Matrix phi(n, group.featureCount());
    REQUIRE(phi.cols() == 2 * k);
    group.features(u, phi);
    for (Index i = 0; i < n; ++i)
        for (Index f = 0; f < k; ++f) {
            double dot = 0.0;
            for (Index j = 0; j < d; ++j)
                dot += w(f, j) * u(i, j);
            CHECK(phi(i, f) == doctest::Approx(std::cos(dot)).epsilon(1e-14));
            CHECK(phi(i, k + f) == doctest::Approx(std::sin(dot)).epsilon(1e-14));
        }
}
