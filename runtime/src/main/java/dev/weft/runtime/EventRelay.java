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
 * ring is full an event is dropped and counted.
 */
final class EventRelay implements TransitionListener, AutoCloseable {

    static final class Event {
        long tick;
        long timeNanos;
        SupervisorState from;
        SupervisorState to;
        int cause;
    }

    private final RingBuffer<Event> ring = RingBuffer.createSingleProducer(Event::new, 1024);
    private final EventPoller<Event> poller = ring.newPoller();
    private final WeftListener listener;
    private final Thread thread;
    private volatile boolean running = true;
    private volatile long dropped;

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
            dropped++;
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
        return dropped;
    }

    private void deliver() {
        EventPoller.Handler<Event> h = (e, seq, end) -> {
            try {
                listener.onTransition(e.tick, e.timeNanos, e.from, e.to, e.cause, Cause.message(e.cause));
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
