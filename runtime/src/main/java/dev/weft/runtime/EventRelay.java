package dev.weft.runtime;

import com.lmax.disruptor.EventPoller;
import com.lmax.disruptor.InsufficientCapacityException;
import com.lmax.disruptor.RingBuffer;
import dev.weft.safety.Cause;
import dev.weft.safety.SupervisorState;
import dev.weft.safety.TransitionListener;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.LockSupport;

/**
 * Carries transitions from the control loop thread to a {@link WeftListener} on a thread of its
 * own, through a preallocated Disruptor ring: the loop side never blocks or allocates; when the
 * ring is full an event is dropped and counted. The ring takes more than one producer: the loop
 * thread's transitions and the loop monitor's stall alarm. A fault's message carries the loop's
 * detail for its cause (an exception's class and message, the value out of range) when there is
 * one.
 */
final class EventRelay implements TransitionListener, AutoCloseable {

    static final class Event {
        long tick;
        long timeNanos;
        SupervisorState from;
        SupervisorState to;
        int cause;
    }

    private final RingBuffer<Event> ring = RingBuffer.createMultiProducer(Event::new, 1024);
    private final EventPoller<Event> poller = ring.newPoller();
    private final WeftListener listener;
    private final Thread thread;
    private volatile boolean running = true;
    private final java.util.concurrent.atomic.AtomicLong dropped = new java.util.concurrent.atomic.AtomicLong();
    private volatile java.util.function.IntFunction<String> details = code -> null;

    EventRelay(WeftListener listener) {
        this.listener = listener;
        ring.addGatingSequences(poller.getSequence());
        thread = new Thread(this::deliver, "weft-events");
        thread.setDaemon(true);
        thread.start();
    }

    @Override
    public void onTransition(long tick, long timeNanos, SupervisorState from, SupervisorState to, int cause) {
        long seq;
        try {
            seq = ring.tryNext();
        } catch (InsufficientCapacityException full) {
            dropped.incrementAndGet();
            return;
        }
        Event e = ring.get(seq);
        e.tick = tick;
        e.timeNanos = timeNanos;
        e.from = from;
        e.to = to;
        e.cause = cause;
        ring.publish(seq);
    }

    long dropped() {
        return dropped.get();
    }

    /** Where the delivery thread finds the detail of a cause code (null for none). */
    void details(java.util.function.IntFunction<String> source) {
        this.details = source;
    }

    private String message(int cause) {
        String base = Cause.message(cause);
        String d = null;
        try {
            d = details.apply(cause);
        } catch (RuntimeException ignored) {
            // the static message alone is still true
        }
        return d == null ? base : base + ": " + d;
    }

    private void deliver() {
        EventPoller.Handler<Event> h = (e, seq, end) -> {
            try {
                listener.onTransition(e.tick, e.timeNanos, e.from, e.to, e.cause, message(e.cause));
            } catch (RuntimeException ignored) {
                // a listener's failure must not stop the delivery of later events
            }
            return true;
        };
        while (true) {
            boolean more = running;
            try {
                if (poller.poll(h) == EventPoller.PollState.IDLE) {
                    if (!more) {
                        return;
                    }
                    LockSupport.parkNanos(TimeUnit.MILLISECONDS.toNanos(2));
                }
            } catch (Exception e) {
                return;
            }
        }
    }

    /** Delivers what is left, then stops the thread. */
    @Override
    public void close() {
        running = false;
        try {
            thread.join(TimeUnit.SECONDS.toMillis(5));
        } catch (InterruptedException e) {
            Thread.currentThread().interrupt();
        }
    }
}
