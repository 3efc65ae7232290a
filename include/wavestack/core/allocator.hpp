#pragma once
/// \file
/// An opt-in allocator setting for programs that train.
///
/// Every Eigen matrix product allocates its packing buffers (hundreds of KiB
/// to a few MiB) and frees them when it returns. glibc's malloc hands such
/// blocks back to the kernel on free, so the next product page-faults them
/// in again. Training makes thousands of products: on the development
/// machine (a virtual machine, where page faults are dear) the default fit
/// of the 8-input borehole function on 1 000 rows spent a fifth of its CPU
/// time in the kernel and took 6.5 s; with freed memory kept, 3.6 s.
///
/// The setting is process-wide, so the library never changes it by itself:
/// a program that trains calls retainFreedMemory() once at start (the
/// wavestack tool, the benchmarks and the demo do). Evaluation allocates
/// nothing per point and does not need it.

#include <cstddef>  // defines __GLIBC__ on glibc systems

#if defined(__GLIBC__)
#include <malloc.h>
#endif

namespace wavestack {

/// Keeps up to 256 MiB of freed heap in the process and serves blocks up to
/// 32 MiB from the heap instead of fresh mappings. Returns false where the
/// C library offers no such setting (anything but glibc); nothing changes then.
inline bool retainFreedMemory()
{
#if defined(__GLIBC__)
    // 32 MiB is glibc's largest mmap threshold on 64-bit hosts.
    return mallopt(M_MMAP_THRESHOLD, 32 << 20) == 1 && mallopt(M_TRIM_THRESHOLD, 256 << 20) == 1;
#else
    return false;
#endif
}

}  // namespace wavestack
