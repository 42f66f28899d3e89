package dev.weft.runtime.udp;

import java.nio.ByteBuffer;
import java.util.concurrent.atomic.AtomicLong;

/**
 * A bounded single-producer, single-consumer ring of preallocated datagram buffers: the control
 * loop claims a slot, encodes into it and publishes it; the sender thread peeks at the oldest
 * slot, sends it and releases it. All slots are slices of one direct buffer made at construction.
 *
 * <p>Positions are ever-growing longs; slot {@code i} is {@code slots[i & mask]}. The producer
 * keeps its own copy of the consumer's position and rereads the shared one only when the ring
 * looks full. The head is published with a volatile store so that a consumer that announced it
 * is about to park (a volatile store of its own, then a volatile load of the head) and a producer
 * that published (a volatile store of the head, then a volatile load of the announcement) cannot
 * both miss each other.
 *
 * <p>Threading: {@link #claim} and {@link #publish} from the producer only; {@link #peek} and
 * {@link #release} from the consumer only; {@link #pending} from either. Nothing allocates after
 * construction, nothing blocks.
 */
final class CommandRing {

    private final ByteBuffer[] slots;
    private final int mask;
    private final AtomicLong head = new AtomicLong();
    private final AtomicLong tail = new AtomicLong();
    /** Producer only: the consumer's position as last read. */
    private long tailSeen;

    /**
     * @param capacity slots, a power of two from 2 to 65,536
     * @param slotBytes bytes per slot
     */
    CommandRing(int capacity, int slotBytes) {
        if (capacity < 2 || capacity > 65_536 || Integer.bitCount(capacity) != 1) {
            throw new IllegalArgumentException("ring capacity must be a power of two from 2 to 65536, got " + capacity);
        }
        ByteBuffer all = ByteBuffer.allocateDirect(capacity * slotBytes);
        slots = new ByteBuffer[capacity];
        for (int i = 0; i < capacity; i++) {
            slots[i] = all.slice(i * slotBytes, slotBytes);
        }
        mask = capacity - 1;
    }

    int capacity() {
        return slots.length;
    }

    /** Producer: the next free slot to fill, or null when the ring is full. */
    ByteBuffer claim() {
        long h = head.getPlain();
        if (h - tailSeen >= slots.length) {
            tailSeen = tail.get();
            if (h - tailSeen >= slots.length) {
                return null;
            }
        }
        return slots[(int) h & mask];
    }

    /** Producer: hands the slot returned by the last {@link #claim} to the consumer. */
    void publish() {
        head.set(head.getPlain() + 1);
    }

    /** Consumer: the oldest published slot, or null when the ring is empty. */
    ByteBuffer peek() {
        long t = tail.getPlain();
        if (t == head.get()) {
            return null;
        }
        return slots[(int) t & mask];
    }

    /** Consumer: gives the slot returned by the last {@link #peek} back to the producer. */
    void release() {
        tail.lazySet(tail.getPlain() + 1);
    }

    /** Slots published and not yet released. */
    int pending() {
        return (int) (head.get() - tail.get());
    }
}
