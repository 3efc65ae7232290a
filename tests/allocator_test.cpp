// Tests of the opt-in allocator setting (core/allocator.hpp).
#include <doctest/doctest.h>

#include <wavestack/wavestack.hpp>  // first: it brings in the C library's __GLIBC__

#if defined(__GLIBC__)
#include <sys/resource.h>
#endif

using namespace wavestack;

#if defined(__GLIBC__)
namespace {

long minorFaults()
{
    rusage usage{};
    getrusage(RUSAGE_SELF, &usage);
    return usage.ru_minflt;
}

}  // namespace

TEST_CASE("with freed memory retained, repeated Gram assemblies fault no pages in")
{
    REQUIRE(retainFreedMemory());
    // Each rank update allocates and frees Eigen's packing buffers. With
    // glibc's defaults, 20 assemblies of a 4 000 x 64 block fault in about
    // 13 000 pages (measured in a fresh process); retained, the buffers are
    // reused and no page is touched for the first time (mallopt(3)).
    Random random(1);
    Matrix features(4000, 64);
    for (Index i = 0; i < features.size(); ++i)
        features.data()[i] = random.normal();
    const Matrix targets = features.col(0);
    Matrix gram, rhs;
    GramAssembler<SerialReduction> assembler;
    assembler.assemble(features, targets, 1.0, gram, rhs);
    const long before = minorFaults();
    for (int call = 0; call < 20; ++call)
        assembler.assemble(features, targets, 1.0, gram, rhs);
    const long faults = minorFaults() - before;
    MESSAGE("page faults over 20 Gram assemblies: " << faults);
    CHECK(faults < 100);
}
#endif
