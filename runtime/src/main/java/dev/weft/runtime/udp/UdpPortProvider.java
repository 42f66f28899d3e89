package dev.weft.runtime.udp;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.port.CommandPort;
import dev.weft.runtime.port.CommandPortProvider;
import dev.weft.runtime.port.PortOptions;

/**
 * The {@code udp} port kind: {@link UdpCommandPort}. Listed in
 * {@code META-INF/services/dev.weft.runtime.port.CommandPortProvider}. Live: the peer may drive
 * hardware, so a dry run refuses it.
 */
public final class UdpPortProvider implements CommandPortProvider {

    /** The kind's name in configuration ({@code port.kind: udp}). */
    public static final String KIND = "udp";

    @Override
    public String kind() {
        return KIND;
    }

    @Override
    public boolean live() {
        return true;
    }

    @Override
    public CommandPort create(PortOptions options) throws BadInputException {
        return UdpCommandPort.create(options);
    }
}
