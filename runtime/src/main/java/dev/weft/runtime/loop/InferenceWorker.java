package dev.weft.runtime.loop;

import com.lmax.disruptor.EventPoller;
import com.lmax.disruptor.InsufficientCapacityException;
import com.lmax.disruptor.RingBuffer;
import dev.weft.runtime.policy.Policy;
import dev.weft.runtime.policy.PolicyInput;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.atomic.AtomicInteger;
import java.util.concurrent.locks.LockSupport;

/**
 * Runs the policy on its own thread, so the control loop never waits for it.
 *
 * <p><b>Requests</b> (loop → worker) go through a triple buffer: the loop writes the observation
 * into a slot of its own and swaps it into the middle, the worker swaps the middle out when it is
 * ready for the next inference. A request therefore never queues behind a slow inference: the
 * newest observation wins, and a request replaced before the worker took it is counted.
 *
 * <p><b>Results</b> (worker → loop) go through an LMAX Disruptor ring of preallocated events that
 * the loop drains with an {@link EventPoller}, never blocking. When the ring is full (the loop has
 * stopped draining) the worker drops the result and counts it.
 *
 * <p>A policy exception or a non-finite output is delivered as a result with status
 * {@link ChunkSink#FAILED} or {@link ChunkSink#NON_FINITE}; the worker thread keeps running.
 *
 * <p>Threading: {@link #request}, {@link #idle} and {@link #drain} from the control loop thread
 * only; {@link #start} and {@link #close} from the thread that owns the run. None of the loop-side
 * methods blocks or allocates.
 */
public final class InferenceWorker implements Inference {

    private static final int FRESH = 4;
    private static final int INDEX = 3;

    private final Policy policy;
    private final LoopClock clock;
    private final int steps;
    private final int chunkValues;

    // triple buffer of requests
    private final PolicyInput[] requestSlots = new PolicyInput[3];
    private final AtomicInteger middle = new AtomicInteger(1);
    private int back = 0;   // loop's slot
    private int front = 2;  // worker's slot

    private final RingBuffer<ResultEvent> results;
    private final EventPoller<ResultEvent> poller;
    private final Drainer drainer = new Drainer();

    private final Thread thread;
    private volatile boolean running;
    private volatile boolean computing;
    private volatile long completed;
    private volatile long failed;
    private volatile long nonFinite;
    private volatile long droppedResults;
    private volatile String lastFailure;
    private long replacedRequests;
    private long requests;

    /** One preallocated result slot. */
    static final class ResultEvent {
        final double[] chunk;
        long originTick;
        long latencyNanos;
        int status;

        ResultEvent(int values) {
            chunk = new double[values];
        }
    }

    /**
     * @param policy the policy; called on the worker thread only
     * @param clock the clock latency is measured with
     * @param ringSize result ring size, a power of two
     * @param threadName the worker thread's name
     */
    public InferenceWorker(Policy policy, LoopClock clock, int ringSize, String threadName) {
        if (Integer.bitCount(ringSize) != 1) {
            throw new IllegalArgumentException("result ring size must be a power of two, got " + ringSize);
        }
        this.policy = policy;
        this.clock = clock;
        this.steps = policy.chunkLength();
        this.chunkValues = policy.chunkLength() * policy.actionSize();
        for (int i = 0; i < 3; i++) {
            requestSlots[i] = PolicyInput.forPolicy(policy);
        }
        final int values = chunkValues;
        this.results = RingBuffer.createSingleProducer(() -> new ResultEvent(values), ringSize);
        this.poller = results.newPoller();
        results.addGatingSequences(poller.getSequence());
        this.thread = new Thread(this::work, threadName);
        this.thread.setDaemon(true);
    }

    /** Starts the worker thread. */
    public void start() {
        running = true;
        thread.start();
    }

    /**
     * Hands the worker a new request. If the worker has not yet taken the previous request, this
     * one replaces it. Copies {@code input}; never blocks.
     */
    @Override
    public void request(PolicyInput input, long nowTick) {
        requestSlots[back].copyFrom(input);
        int previous = middle.getAndSet(back | FRESH);
        back = previous & INDEX;
        requests++;
        if ((previous & FRESH) != 0) {
            replacedRequests++;
        }
        LockSupport.unpark(thread);
    }

    @Override
    public java.util.List<dev.weft.runtime.policy.InputBinding.History> histories() {
        return policy.histories();
    }

    /** True when the worker is not computing and no request is waiting. */
    @Override
    public boolean idle() {
        // FRESH first: the worker sets computing before it clears FRESH, so a cleared FRESH read
        // here makes its computing visible; read the other way round, a request taken between
        // the two reads would look idle
        return (middle.get() & FRESH) == 0 && !computing;
    }

    /**
     * Delivers every finished result to {@code sink}, oldest first, on the calling thread; results
     * are ready as soon as the worker publishes them, whatever {@code nowTick} is.
     *
     * @return the number of results delivered
     */
    @Override
    public int drain(long nowTick, ChunkSink sink) {
        drainer.sink = sink;
        drainer.count = 0;
        try {
            poller.poll(drainer);
        } catch (Exception e) {
            // the drainer does not throw; a sink that throws is a programming error
            throw new IllegalStateException("chunk sink failed", e);
        } finally {
            drainer.sink = null;
        }
        return drainer.count;
    }

    private final class Drainer implements EventPoller.Handler<ResultEvent> {
        ChunkSink sink;
        int count;

        @Override
        public boolean onEvent(ResultEvent e, long sequence, boolean endOfBatch) {
            sink.onChunk(e.chunk, steps, e.originTick, e.latencyNanos, e.status);
            count++;
            return true;
        }
    }

    private void work() {
        double[] chunk = new double[chunkValues];
        while (running) {
            if ((middle.get() & FRESH) == 0) {
                LockSupport.parkNanos(this, TimeUnit.MILLISECONDS.toNanos(1));
                continue;
            }
            computing = true;
            front = middle.getAndSet(front) & INDEX;
            PolicyInput input = requestSlots[front];
            long tick = input.tick();
            long start = clock.nanoTime();
            int status;
            try {
                policy.infer(input, chunk);
                status = allFinite(chunk) ? ChunkSink.OK : ChunkSink.NON_FINITE;
            } catch (Throwable t) {
                status = ChunkSink.FAILED;
                lastFailure = t.toString();
            }
            long latency = clock.nanoTime() - start;
            if (status == ChunkSink.OK) {
                completed++;
            } else if (status == ChunkSink.NON_FINITE) {
                nonFinite++;
            } else {
                failed++;
            }
            publish(chunk, tick, latency, status);
            computing = false;
        }
    }

    private void publish(double[] chunk, long tick, long latency, int status) {
        long seq;
        try {
            seq = results.tryNext();
        } catch (InsufficientCapacityException full) {
            droppedResults++;
            return;
        }
        ResultEvent e = results.get(seq);
        System.arraycopy(chunk, 0, e.chunk, 0, chunkValues);
        e.originTick = tick;
        e.latencyNanos = latency;
        e.status = status;
        results.publish(seq);
    }

    private static boolean allFinite(double[] v) {
        for (double x : v) {
            if (!Double.isFinite(x)) {
                return false;
            }
        }
        return true;
    }

    /** Inferences that produced a usable chunk. */
    public long completed() {
        return completed;
    }

    /** Inferences whose policy threw. */
    public long failed() {
        return failed;
    }

    /** Inferences that returned a non-finite value. */
    public long nonFinite() {
        return nonFinite;
    }

    /** Results dropped because the loop did not drain. */
    public long droppedResults() {
        return droppedResults;
    }

    /** Requests made (loop thread's count). */
    public long requests() {
        return requests;
    }

    /** Requests replaced by a newer one before the worker took them (loop thread's count). */
    public long replacedRequests() {
        return replacedRequests;
    }

    /** The latest policy failure as text, or null. */
    @Override
    public String lastFailure() {
        return lastFailure;
    }

    /** Stops the worker and waits for it (up to the current inference plus a second). */
    @Override
    public void close() {
        running = false;
        LockSupport.unpark(thread);
        if (thread.isAlive()) {
            try {
                thread.join(TimeUnit.SECONDS.toMillis(5));
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
            }
        }
    }
}
