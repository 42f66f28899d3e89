package dev.weft.filters;

/**
 * The storage shared by the blenders that execute one plan at a time, the newest chunk's
 * ({@link LatestChunkBlender}, {@link CrossfadeBlender}): per tick the plan's position, velocity
 * and acceleration; a chunk from an older observation than the plan's is dropped, and a new chunk
 * replaces the plan beyond its own end. Package-private; single-threaded; allocated once.
 */
abstract class NewestPlanBlender extends AbstractChunkBlender {

    /** Per slot and joint, {@code slot * dims + joint}. */
    final double[] positions;
    final double[] velocities;
    final double[] accelerations;

    NewestPlanBlender(String kind, int dims, int maxSteps, double stepRatio, Interpolation interpolation) {
        super(kind, dims, maxSteps, stepRatio, interpolation);
        this.positions = new double[capacity * dims];
        this.velocities = new double[capacity * dims];
        this.accelerations = new double[capacity * dims];
    }

    /** Puts a chunk's state for one tick into the slot starting at {@code base} as it is (read only). */
    final void store(int base, double[] position, double[] velocity, double[] acceleration) {
        System.arraycopy(position, 0, positions, base, dims);
        System.arraycopy(velocity, 0, velocities, base, dims);
        System.arraycopy(acceleration, 0, accelerations, base, dims);
    }

    @Override
    final boolean dropsOlderOrigins() {
        return true;
    }

    @Override
    final long planEndAfter(long chunkEnd) {
        return chunkEnd;
    }

    @Override
    final void readPosition(int slot, double[] out) {
        System.arraycopy(positions, slot * dims, out, 0, dims);
    }

    @Override
    final double readPosition(int slot, int dimension) {
        return positions[slot * dims + dimension];
    }

    @Override
    final void readState(int slot, double[] position, double[] velocity, double[] acceleration) {
        int base = slot * dims;
        System.arraycopy(positions, base, position, 0, dims);
        System.arraycopy(velocities, base, velocity, 0, dims);
        System.arraycopy(accelerations, base, acceleration, 0, dims);
    }
}
