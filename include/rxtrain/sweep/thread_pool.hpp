// A small fixed pool of worker threads for independent tasks, in the
// caller's scope (no global pool). Tasks are handed out one index at a
// time from a shared counter, so uneven run times balance out; results
// land where the caller's body stores them by index, so the output order
// never depends on which thread ran what.
//
// Example:
//   std::vector<double> out(n);
//   parallel_for(n, 4, [&](std::size_t i, std::size_t worker) { out[i] = f(i); },
//                [](std::size_t done) { /* progress */ });
#pragma once

#include <chrono>
#include <cstddef>
#include <functional>

namespace rxtrain::sweep {

// Threads to use for `jobs` (0: every hardware thread, at least 1).
std::size_t resolve_jobs(std::size_t jobs);

// Runs body(i, worker) for every i in [0, count) on `jobs` threads
// (worker in [0, jobs)). progress(done) is called on the calling thread
// about every `period` and once at the end. The first exception a body
// throws stops the hand-out of further tasks and is rethrown here after
// every thread has finished; so does an exception from progress (the
// tasks under way finish first), which is how a caller cancels the work.
void parallel_for(std::size_t count, std::size_t jobs,
                  const std::function<void(std::size_t index, std::size_t worker)>& body,
                  const std::function<void(std::size_t done)>& progress = {},
                  std::chrono::milliseconds period = std::chrono::milliseconds(200));

}  // namespace rxtrain::sweep
