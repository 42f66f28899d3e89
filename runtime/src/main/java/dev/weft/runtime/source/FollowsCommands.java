package dev.weft.runtime.source;

import dev.weft.runtime.port.CommandFrame;

/**
 * A source that needs to know every command the loop sent (a simulation that moves with them).
 * The loop calls {@link #followed} once per tick, after the port's emit, on the loop thread; it
 * must not block or allocate.
 */
public interface FollowsCommands {

    /** The command of this tick; read only during the call. */
    void followed(CommandFrame frame);
}
