package dev.weft.safety;

import java.lang.management.ManagementFactory;

/**
 * Bytes allocated by the current thread while a piece of work runs, from the JVM's per-thread
 * allocation counter. The work runs in three rounds and the least count is reported: an allocation
 * on the measured path shows in every round, while one-time events of the JVM (class loading,
 * recompilation) do not repeat.
 */
final class AllocationMeter {

    private AllocationMeter() {
    }

    static long leastBytes(Runnable work) {
        com.sun.management.ThreadMXBean mx = (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();
        long tid = Thread.currentThread().getId();
        mx.getThreadAllocatedBytes(tid);
        long least = Long.MAX_VALUE;
        for (int round = 0; round < 3; round++) {
            long before = mx.getThreadAllocatedBytes(tid);
            work.run();
            long after = mx.getThreadAllocatedBytes(tid);
            least = Math.min(least, after - before);
        }
        return least;
    }
}
