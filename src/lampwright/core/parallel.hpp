#pragma once
// Work spread over threads: how many to use, and a loop over items on them.
#include <cstddef>
#include <functional>

namespace lampwright {

// Worker threads for `items` pieces of work: `requested` (0 = all cores), at most the number of
// cores (more only add switching) and of items (more stay idle), at least 1.
unsigned worker_count(unsigned requested, std::size_t items);

// Runs worker() on `workers` threads at once (the calling thread is one of them) and returns when
// every one has returned. A thread that cannot be started leaves the work to those that could; the
// worker itself takes its items (an atomic counter) and keeps its own exceptions.
void run_workers(unsigned workers, const std::function<void()>& worker);

// Runs body(i) once for every i in [0, n) on `workers` threads (the calling thread is one of
// them), taking the next i as each finishes. A thread that cannot be started leaves its share to
// the others. The first exception a body throws is rethrown after every worker has stopped; the
// bodies not yet started then do not run.
void parallel_for(std::size_t n, unsigned workers, const std::function<void(std::size_t)>& body);

}  // namespace lampwright
