// Tests of the Gram assembly (solve/gram.hpp) and its kernel (detail/gram_kernel.hpp).
#include <doctest/doctest.h>

#include <algorithm>
#include <cmath>

#include <wavestack/core/random.hpp>
#include <wavestack/parallel/reduction.hpp>
#include <wavestack/solve/gram.hpp>

#include "test_support.hpp"

using namespace wavestack;

namespace {

/// Largest entry-wise difference on the lower triangle, relative to the
/// largest entry of the reference.
double lowerDifference(const Matrix& value, const Matrix& reference)
{
    double difference = 0.0;
    for (Index j = 0; j < reference.cols(); ++j)
        for (Index i = j; i < reference.rows(); ++i)
            difference = std::max(difference, std::abs(value(i, j) - reference(i, j)));
    return difference / reference.cwiseAbs().maxCoeff();
}

/// The kernel on one architecture against Eigen's general product Phi^T Phi
/// (reference: Eigen 3.4, a general-purpose library), over shapes that leave
/// partial panels, partial micro-tiles and partial row chunks, on a view
/// whose outer stride is not its row count.
template <class Arch>
void checkKernel()
{
    Random random(5);
    detail::GramKernel<Arch> kernel;
    Matrix out, rhs;
    for (const Index width : {1, 2, 5, 8, 13, 24, 50, 130}) {
        for (const Index rows : {1, 3, 300, 1001}) {
            const Matrix whole = testing::randomNormal(rows + 7, width, 1.0, random);
            const MatrixView phi = whole.middleRows(4, rows);
            if (rows > 1 && width > 1)  // a single row or column is contiguous
                REQUIRE(phi.outerStride() == rows + 7);
            const Matrix targets = testing::randomNormal(rows, 2, 1.0, random);
            kernel.lowerProduct(phi, targets, out, rhs);
            CAPTURE(width);
            CAPTURE(rows);
            REQUIRE(out.rows() == detail::GramKernel<Arch>::paddedWidth(width));
            const Matrix reference = phi.transpose() * phi;
            // Both sum `rows` products in different orders: rounding only.
            CHECK(lowerDifference(out.topLeftCorner(width, width), reference) < 1e-13);
            CHECK((rhs - phi.transpose() * targets).norm() / rhs.norm() < 1e-13);
        }
    }
}

Matrix gramOf(const Matrix& phi, const Matrix& r, Index threads, Matrix* rhs = nullptr)
{
    GramAssembler<ThreadReduction> assembler{ThreadReduction(threads)};
    Matrix gram = Matrix::Constant(phi.cols(), phi.cols(), -1.0), right;
    assembler.assemble(phi, r, 0.25, gram, right);
    if (rhs)
        *rhs = right;
    return gram;
}

}  // namespace

TEST_CASE("the Gram kernel matches Eigen's product on every shape")
{
    checkKernel<xsimd::default_arch>();
#if XSIMD_WITH_AVX2
    checkKernel<xsimd::avx2>();
#endif
#if XSIMD_WITH_SSE2
    checkKernel<xsimd::sse2>();
#endif
}

TEST_CASE("the assembler scales both products, leaves the strict upper triangle alone, and ignores thread counts")
{
    Random random(6);
    // 6 000 rows of 40 features: 8 row blocks, so the block sums are exercised.
    const Matrix phi = testing::randomNormal(6000, 40, 1.0, random);
    const Matrix r = testing::randomNormal(6000, 2, 1.0, random);
    Matrix rhs;
    const Matrix gram = gramOf(phi, r, 1, &rhs);
    // Reference: Eigen 3.4's general products.
    CHECK(lowerDifference(gram, 0.25 * phi.transpose() * phi) < 1e-13);
    CHECK((rhs - 0.25 * phi.transpose() * r).norm() / rhs.norm() < 1e-13);
    for (Index j = 1; j < gram.cols(); ++j)
        for (Index i = 0; i < j; ++i)
            REQUIRE(gram(i, j) == -1.0);
    // Bit-identical for 1 and 2 threads: rows are cut by size alone and the
    // blocks' sums are added in block order.
    Matrix rhs2;
    CHECK(gramOf(phi, r, 2, &rhs2) == gram);
    CHECK(rhs2 == rhs);
}

TEST_CASE("the assembler handles fewer rows than one block and no rows")
{
    Random random(7);
    const Matrix phi = testing::randomNormal(10, 3, 1.0, random);
    const Matrix r = testing::randomNormal(10, 1, 1.0, random);
    CHECK(lowerDifference(gramOf(phi, r, 2), 0.25 * phi.transpose() * phi) < 1e-13);
    const Matrix none(0, 3), noTargets(0, 1);
    const Matrix gram = gramOf(none, noTargets, 1);
    CHECK(gram.triangularView<Eigen::Lower>().toDenseMatrix().isZero(0.0));
}
