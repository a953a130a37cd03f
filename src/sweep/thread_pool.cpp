#include "rxtrain/sweep/thread_pool.hpp"

#include <algorithm>
#include <atomic>
#include <condition_variable>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

namespace rxtrain::sweep {

std::size_t resolve_jobs(std::size_t jobs) {
  if (jobs > 0) return jobs;
  return std::max<std::size_t>(1, std::thread::hardware_concurrency());
}

void parallel_for(std::size_t count, std::size_t jobs,
                  const std::function<void(std::size_t, std::size_t)>& body,
                  const std::function<void(std::size_t)>& progress,
                  std::chrono::milliseconds period) {
  jobs = std::max<std::size_t>(1, std::min(resolve_jobs(jobs), std::max<std::size_t>(count, 1)));
  std::atomic<std::size_t> next{0};
  std::atomic<std::size_t> done{0};
  std::atomic<bool> stop{false};
  std::mutex m;
  std::condition_variable cv;
  std::size_t running = jobs;
  std::exception_ptr error;

  const auto worker = [&](std::size_t w) {
    for (;;) {
      if (stop.load()) break;
      const std::size_t i = next.fetch_add(1);
      if (i >= count) break;
      try {
        body(i, w);
      } catch (...) {
        std::lock_guard lock(m);
        if (!error) error = std::current_exception();
        stop.store(true);
        break;
      }
      done.fetch_add(1);
    }
    std::lock_guard lock(m);
    --running;
    cv.notify_all();
  };
  {
    std::vector<std::jthread> threads;
    threads.reserve(jobs);
    for (std::size_t w = 0; w < jobs; ++w) threads.emplace_back(worker, w);
    std::unique_lock lock(m);
    while (running > 0) {
      cv.wait_for(lock, period, [&] { return running == 0; });
      if (progress && running > 0 && !stop.load()) {
        lock.unlock();
        try {
          progress(done.load());
        } catch (...) {
          // A caller that stops the work (cancel) stops it as a failed
          // task does: the tasks under way finish, no other starts.
          std::lock_guard guard(m);
          if (!error) error = std::current_exception();
          stop.store(true);
        }
        lock.lock();
      }
    }
  }  // joins
  if (error) std::rethrow_exception(error);
  if (progress) progress(done.load());
}

}  // namespace rxtrain::sweep
