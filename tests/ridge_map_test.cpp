// Tests of the sigmoidal ridge feature map (features/ridge_map.hpp) and of
// feature groups of several maps in one layer (features/feature_group.hpp).
#include <doctest/doctest.h>

#include <cmath>

#include <wavestack/core/random.hpp>
#include <wavestack/features/feature_group.hpp>
#include <wavestack/model/layer.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

using testing::randomNormal;

}  // namespace

TEST_CASE("ridge features are tanh(w . u + c), a row being (w, c)")
{
    Random random(1);
    const Index n = 29, d = 3, k = 6;
    const Matrix u = randomNormal(n, d, 1.0, random);
    const FeatureGroup group{FeatureKind::ridge, randomNormal(k, d + 1, 4.0, random)};
    CHECK(parameterSize(FeatureKind::ridge, d) == d + 1);
    CHECK(group.featureCount() == k);
    Matrix phi(n, k);
    group.features(u, phi);
    for (Index i = 0; i < n; ++i)
        for (Index f = 0; f < k; ++f) {
            // Reference: the C library's tanh.
            const double angle = group.parameters.row(f).head(d).dot(u.row(i)) + group.parameters(f, d);
            CHECK(phi(i, f) == doctest::Approx(std::tanh(angle)).epsilon(1e-14));
        }
}

TEST_CASE("a layer of both maps lays their features side by side and measures each row's amplitudes")
{
    Random random(2);
    const Index n = 10, d = 2;
    Layer layer;
    layer.groups = {FeatureGroup{FeatureKind::fourier, randomNormal(3, d, 2.0, random)},
                    FeatureGroup{FeatureKind::ridge, randomNormal(2, d + 1, 2.0, random)}};
    CHECK(layer.featureCount() == 3 * 2 + 2);
    CHECK(layer.width() == 5);
    const Matrix u = randomNormal(n, d, 1.0, random);
    Matrix phi(n, layer.featureCount());
    layer.features(u, Matrix(n, 0), phi);
    Matrix fourier(n, 6), ridge(n, 2);
    layer.groups[0].features(u, fourier);
    layer.groups[1].features(u, ridge);
    CHECK(phi.leftCols(6) == fourier);
    CHECK(phi.rightCols(2) == ridge);

    // |b_k|: Fourier row k owns amplitude rows k and 3 + k; ridge row j owns row 6 + j.
    layer.amplitudes = randomNormal(8, 2, 1.0, random);
    const Vector norms = layer.amplitudeNorms();
    REQUIRE(norms.size() == 5);
    const Matrix& b = layer.amplitudes;
    CHECK(norms[1] == doctest::Approx(std::sqrt(b.row(1).squaredNorm() + b.row(4).squaredNorm())));
    CHECK(norms[4] == doctest::Approx(b.row(7).norm()));
}
