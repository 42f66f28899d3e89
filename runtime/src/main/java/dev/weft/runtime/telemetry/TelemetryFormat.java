package dev.weft.runtime.telemetry;

import dev.weft.safety.SupervisorState;
import java.util.List;

/**
 * The telemetry CSV layout: one header line, then one line per control tick.
 *
 * <pre>
 * tick,time_s,period_error_us,compute_us,state,watchdog,limiter,plan_ticks,chunk_age_ticks,emitted,
 *   target.&lt;joint&gt;…,command.&lt;joint&gt;…,limiter.&lt;joint&gt;…[,frame_age_ms.&lt;camera&gt;…]
 * </pre>
 *
 * {@code state} is the supervisor state's name in lower case, {@code watchdog} the bit mask of the
 * conditions present (bit {@code code − 1}), {@code limiter} the or-ed limiter flags, {@code emitted}
 * 1 when the port accepted the frame, {@code limiter.<joint>} each joint's limiter flags,
 * {@code frame_age_ms.<camera>} (only with watched cameras) the age of that camera's latest frame
 * at the tick's start in milliseconds, −1 before its first frame. Values are written in Java's
 * shortest round-trip form.
 */
public final class TelemetryFormat implements CsvRecorder.Format<TelemetryRow> {

    private static final String[] STATE_NAMES;

    static {
        SupervisorState[] states = SupervisorState.values();
        STATE_NAMES = new String[states.length];
        for (int i = 0; i < states.length; i++) {
            STATE_NAMES[i] = states[i].name().toLowerCase(java.util.Locale.ROOT);
        }
    }

    private final List<String> joints;
    private final List<String> cameras;

    public TelemetryFormat(List<String> jointNames) {
        this(jointNames, List.of());
    }

    /** With a frame-age column per watched camera, after the joints' columns. */
    public TelemetryFormat(List<String> jointNames, List<String> cameraNames) {
        this.joints = List.copyOf(jointNames);
        this.cameras = List.copyOf(cameraNames);
    }

    /**
     * The state name used in the files for a supervisor state ordinal, which is also the
     * {@code CommandFrame.STATE_} code.
     */
    public static String stateName(int ordinal) {
        return STATE_NAMES[ordinal];
    }

    @Override
    public void header(StringBuilder out) {
        out.append("tick,time_s,period_error_us,compute_us,state,watchdog,limiter,plan_ticks,chunk_age_ticks,emitted");
        for (String j : joints) {
            out.append(",target.").append(j);
        }
        for (String j : joints) {
            out.append(",command.").append(j);
        }
        for (String j : joints) {
            out.append(",limiter.").append(j);
        }
        for (String c : cameras) {
            out.append(",frame_age_ms.").append(c);
        }
    }

    @Override
    public void row(TelemetryRow r, StringBuilder out) {
        out.append(r.tick).append(',');
        out.append(r.timeNanos / 1e9).append(',');
        out.append(r.periodErrorNanos / 1e3).append(',');
        out.append(r.computeNanos / 1e3).append(',');
        out.append(STATE_NAMES[r.state]).append(',');
        out.append(r.watchdogMask).append(',');
        out.append(r.limiterFlags).append(',');
        out.append(r.planTicks).append(',');
        out.append(r.chunkAgeTicks).append(',');
        out.append(r.emitted ? '1' : '0');
        for (double v : r.target) {
            out.append(',').append(v);
        }
        for (double v : r.command) {
            out.append(',').append(v);
        }
        for (int f : r.jointFlags) {
            out.append(',').append(f);
        }
        for (long age : r.frameAgeNanos) {
            if (age < 0) {
                out.append(",-1");
            } else {
                out.append(',').append(age / 1e6);
            }
        }
    }
}
