// Tests of the Fourier feature map (features/fourier_map.hpp) and its sincos kernel.
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/core/random.hpp>
#include <wavestack/detail/simd.hpp>
#include <wavestack/features/feature_group.hpp>

using namespace wavestack;

TEST_CASE("vectorised sincos agrees with std::sin and std::cos")
{
    // Reference: the C library's sin/cos (glibc, correctly rounded to < 1 ulp in this range).
    Random random(3);
    for (Index count : {0, 1, 3, 8, 17, 1000}) {
        Vector angle(count), sine(count), cosine(count);
        for (Index i = 0; i < count; ++i)
            angle[i] = (random.uniform() - 0.5) * 400.0;  // |angle| <= 200: large frequencies times scaled inputs
        detail::sincos(angle.data(), sine.data(), cosine.data(), count);
        for (Index i = 0; i < count; ++i) {
            CHECK(std::abs(sine[i] - std::sin(angle[i])) < 4e-16 * std::max(1.0, std::abs(angle[i])));
            CHECK(std::abs(cosine[i] - std::cos(angle[i])) < 4e-16 * std::max(1.0, std::abs(angle[i])));
        }
    }
}

TEST_CASE("sincos may write the cosine over its input")
{
    Vector angle = Vector::LinSpaced(13, -3.0, 3.0);
    const Vector original = angle;
    Vector sine(13);
    detail::sincos(angle.data(), sine.data(), angle.data(), 13);
    for (Index i = 0; i < 13; ++i)
        CHECK(angle[i] == doctest::Approx(std::cos(original[i])).epsilon(1e-15));
}

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
