package dev.weft.runtime.port;

import dev.weft.runtime.BadInputException;

/**
 * Makes command ports of one kind. Found with {@link java.util.ServiceLoader}: a jar on the class
 * path that lists its provider in {@code META-INF/services/dev.weft.runtime.port.CommandPortProvider}
 * adds a port kind without touching weft.
 *
 * <p>Threading: called from the thread that builds the run, never from the control loop.
 */
public interface CommandPortProvider {

    /** The kind's name as configuration names it ({@code port.kind}), such as {@code udp}. */
    String kind();

    /** True when the port drives real hardware or a peer that may; a dry run refuses such ports. */
    boolean live();

    /**
     * Creates an unopened port from its options.
     *
     * @param options the port's options; read every key you know, then call {@link PortOptions#finish()}
     * @throws BadInputException naming each bad option by its key path
     */
    CommandPort create(PortOptions options) throws BadInputException;
}
