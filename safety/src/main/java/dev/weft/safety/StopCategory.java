package dev.weft.safety;

/**
 * Stop categories of IEC 60204-1 (clause 9.2.2) that the {@link Supervisor} implements. Category 0
 * (immediate removal of power) is not a software function; it belongs to the hardware emergency stop.
 */
public enum StopCategory {
    /** Controlled stop with power left on; the position is held at standstill. The default. */
    CATEGORY_2,
    /** Controlled stop, then the port is asked to remove power once standstill is reached. */
    CATEGORY_1
}
