#include "lampwright/core/parallel.hpp"

#include <algorithm>
#include <atomic>
#include <exception>
#include <mutex>
#include <system_error>
#include <thread>
#include <vector>

namespace lampwright {

unsigned worker_count(unsigned requested, std::size_t items) {
    const unsigned cores = std::max(1u, std::thread::hardware_concurrency());
    const unsigned wanted = requested == 0 ? cores : std::min(requested, cores);
    return static_cast<unsigned>(std::min<std::size_t>(wanted, std::max<std::size_t>(1, items)));
}

void parallel_for(std::size_t n, unsigned workers, const std::function<void(std::size_t)>& body) {
    std::atomic<std::size_t> next{0};
    std::atomic<bool> stop{false};
    std::exception_ptr first;
    std::mutex first_mutex;
    auto worker = [&] {
        for (std::size_t i = next++; i < n && !stop; i = next++) {
            try {
                body(i);
            } catch (...) {
                std::lock_guard<std::mutex> lock(first_mutex);
                if (!first) first = std::current_exception();
                stop = true;
            }
        }
    };
    run_workers(workers, worker);
    if (first) std::rethrow_exception(first);
}

void run_workers(unsigned workers, const std::function<void()>& worker) {
    // jthreads join when they go out of scope, on every path: a thread that cannot be started
    // (std::system_error) leaves the work to those that could, never a joinable std::thread
    // destroyed (which is std::terminate).
    std::vector<std::jthread> pool;
    pool.reserve(workers > 0 ? workers - 1 : 0);
    for (unsigned t = 1; t < workers; ++t) {
        try {
            pool.emplace_back(worker);
        } catch (const std::system_error&) {
            break;
        }
    }
    worker();
}

}  // namespace lampwright
