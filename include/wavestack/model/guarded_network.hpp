#pragma once
/// \file
/// Evaluation that falls back to the real model outside the training domain.

#include <atomic>
#include <cstdint>
#include <utility>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"
#include "wavestack/model/network.hpp"

namespace wavestack {

/// Calls the network inside its training domain and `fallback(x, y)` (the
/// original, expensive function, same signature as Network::evaluate)
/// outside it, counting both. Thread-safe when the fallback is; the counters
/// are atomic. With `checkShape` the Mahalanobis test of TrainingDomain is
/// applied as well as the box (it allocates a d-vector per call).
template <class Fallback>
class GuardedNetwork {
public:
    GuardedNetwork(const Network& network, Fallback fallback, bool checkShape = false)
        : m_network(network), m_fallback(std::move(fallback)), m_checkShape(checkShape)
    {
        if (network.domain().empty())
            throw InvalidInput("GuardedNetwork: the network has no training domain (fit sets one; a loaded "
                               "model file without a DOMN section has none)");
    }

    /// y = f(x); returns true when the fallback was used.
    bool operator()(const double* x, double* y) const
    {
        m_calls.fetch_add(1, std::memory_order_relaxed);
        const TrainingDomain& domain = m_network.domain();
        const bool outside = domain.outsideBox(x) ||
                             (m_checkShape && domain.outside(Eigen::Map<const Vector>(x, m_network.inputCount())));
        if (outside) {
            m_fallbacks.fetch_add(1, std::memory_order_relaxed);
            m_fallback(x, y);
        } else {
            m_network.evaluate(x, y);
        }
        return outside;
    }

    std::uint64_t calls() const { return m_calls.load(); }
    std::uint64_t fallbacks() const { return m_fallbacks.load(); }

private:
    const Network& m_network;
    Fallback m_fallback;
    bool m_checkShape;
    mutable std::atomic<std::uint64_t> m_calls{0};
    mutable std::atomic<std::uint64_t> m_fallbacks{0};
};

}  // namespace wavestack
