#pragma once
/// \file
/// Reduction policies: how the row-wise work of training (feature matrices,
/// Gram matrix and right-hand side) is spread over workers.
///
/// Contract: `workers()` and `run(taskCount, task)`, which calls task(t) once
/// for every t in [0, taskCount) and returns when all are done. Callers cut
/// rows into tasks by the data size alone and combine the tasks' partial
/// results in task order, so the result is bit for bit the same for every
/// worker count. An MPI policy fits the same contract (tasks = local rows,
/// combined by an ordered all-reduce).

#include <algorithm>
#include <exception>
#include <string>
#include <thread>
#include <vector>

#include "wavestack/core/error.hpp"
#include "wavestack/core/types.hpp"

namespace wavestack {

/// Runs every task on the calling thread.
struct SerialReduction {
    Index workers() const { return 1; }

    template <class Task>
    void run(Index taskCount, Task&& task) const
    {
        for (Index t = 0; t < taskCount; ++t)
            task(t);
    }
};

/// Runs tasks on `threads` std::threads (the caller is one of them); task t
/// goes to thread t mod threads. An exception in any task is rethrown.
class ThreadReduction {
public:
    explicit ThreadReduction(Index threads = Index(std::thread::hardware_concurrency()))
        : m_threads(threads < 1 ? 1 : threads)
    {
    }

    Index workers() const { return m_threads; }

    template <class Task>
    void run(Index taskCount, Task&& task) const
    {
        const Index threads = std::min(m_threads, taskCount);
        if (threads <= 1) {
            SerialReduction().run(taskCount, task);
            return;
        }
        std::vector<std::exception_ptr> errors(static_cast<std::size_t>(threads));
        auto work = [&](Index worker) {
            try {
                for (Index t = worker; t < taskCount; t += threads)
                    task(t);
            } catch (...) {
                errors[static_cast<std::size_t>(worker)] = std::current_exception();
            }
        };
        std::vector<std::thread> pool;
        for (Index worker = 1; worker < threads; ++worker)
            pool.emplace_back(work, worker);
        work(0);
        for (auto& thread : pool)
            thread.join();
        for (const auto& error : errors)
            if (error)
                std::rethrow_exception(error);
    }

private:
    Index m_threads;
};

/// Fixed cut of `rows` rows into contiguous blocks of at least `minimum`
/// rows and at most `maximum` blocks; depends on the sizes only, never on the
/// worker count, which keeps reductions deterministic.
struct RowBlocks {
    RowBlocks(Index rows, Index minimum = 512, Index maximum = 8)
        : rows(rows), count(std::max<Index>(1, std::min<Index>(maximum, rows / std::max<Index>(1, minimum))))
    {
    }
    Index begin(Index block) const { return rows * block / count; }
    Index size(Index block) const { return begin(block + 1) - begin(block); }

    Index rows;
    Index count;
};

}  // namespace wavestack
