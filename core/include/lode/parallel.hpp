// Work spread over threads with progress and cancellation. No global state: each call makes its own
// threads. Results must not depend on the number of threads: give each unit of work its own random
// stream (random.hpp) indexed by the unit, never by the thread.
#pragma once

#include "lode/common.hpp"

#include <functional>

namespace lode {

// Number of threads to use when the caller passes 0: the hardware's, at least 1.
int default_thread_count() noexcept;

// Runs body(i) for every i in [0, count) on up to `threads` threads (0 = default_thread_count()).
// The calling thread reports progress (if given) once before any work, about every 50 ms, and once at
// the end; when it returns
// false the remaining units are skipped and Error(cancelled) is thrown. The first exception thrown by
// a unit stops the others and is rethrown in the calling thread. With one thread (threads == 1, or a
// single unit) the units run on the calling thread itself, in order, and progress is checked between
// units.
void parallel_for(Index count, int threads, const std::function<void(Index)>& body,
                  const ProgressFn& progress = {});

}  // namespace lode
