/**
 * Turning a stream of overlapping, late-arriving action chunks into one plan (per control tick a
 * position and the plan's exact velocity and acceleration), and optional smoothing of the action.
 *
 * <p>Time model: control ticks {@code 0, 1, 2, ...} at period {@code Δc}. A chunk of {@code K}
 * actions of {@code D} values at step period {@code Δp = r·Δc} carries the tick {@code t0} of the
 * observation it was computed from; action {@code j} is meant for time {@code t0·Δc + j·Δp}, that is
 * for tick offset {@code j·r} after {@code t0}. Latency never shifts the plan in time: whatever part
 * of a chunk lies before the tick at which it arrives is dropped and counted.
 *
 * <p>Blenders ({@link dev.weft.filters.ChunkBlender}): {@link dev.weft.filters.TemporalEnsembleBlender},
 * {@link dev.weft.filters.LatestChunkBlender}, {@link dev.weft.filters.CrossfadeBlender}. Smoothers
 * ({@link dev.weft.filters.Smoother}): {@link dev.weft.filters.ButterworthLowPass},
 * {@link dev.weft.filters.OneEuroFilter}.
 *
 * <p>Everything here speaks in primitive arrays, is single-threaded (all calls on one instance from
 * one thread), never blocks, and allocates nothing after construction, except the methods whose Javadoc
 * says they build a {@code String}.
 */
package dev.weft.filters;
