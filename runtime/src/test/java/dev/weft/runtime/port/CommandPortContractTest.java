package dev.weft.runtime.port;

import static org.assertj.core.api.Assertions.assertThat;

import java.net.InetSocketAddress;
import java.nio.channels.DatagramChannel;
import java.nio.file.Path;
import java.util.LinkedHashMap;
import java.util.Map;
import java.util.TreeMap;
import java.util.stream.Stream;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.junit.jupiter.params.ParameterizedTest;
import org.junit.jupiter.params.provider.MethodSource;

/** One contract, run over every port kind found on the class path. */
class CommandPortContractTest {

    @TempDir
    static Path dir;

    static DatagramChannel sink;

    static Stream<String> kinds() {
        return Ports.providers(CommandPortContractTest.class.getClassLoader()).keySet().stream();
    }

    private static CommandPort create(String kind) throws Exception {
        Map<String, Object> options = new LinkedHashMap<>();
        switch (kind) {
            case "csv" -> options.put("file", "commands-" + System.nanoTime() + ".csv");
            case "udp" -> {
                if (sink == null) {
                    sink = DatagramChannel.open().bind(new InetSocketAddress("127.0.0.1", 0));
                }
                options.put("port", ((InetSocketAddress) sink.getLocalAddress()).getPort());
            }
            default -> {
            }
        }
        CommandPort p = Ports.provider(kind, "port.kind").create(new PortOptions("port.options", options, dir));
        if (p instanceof SimPort sim) {
            sim.attach(new double[3], 0.002);
        }
        return p;
    }

    @Test
    void theBuiltInKindsAreFoundAndOnlyUdpIsLive() {
        TreeMap<String, CommandPortProvider> all = Ports.providers(getClass().getClassLoader());
        assertThat(all.keySet()).containsExactly("csv", "discard", "sim", "udp");
        assertThat(all.get("udp").live()).isTrue();
        assertThat(all.get("csv").live()).isFalse();
        assertThat(all.get("sim").live()).isFalse();
        assertThat(all.get("discard").live()).isFalse();
    }

    @Test
    void frameStateCodesAreTheSupervisorStatesOrdinals() {
        // the loop writes SupervisorState.ordinal() into CommandFrame.state; the codes must agree
        assertThat(dev.weft.safety.SupervisorState.DISARMED.ordinal()).isEqualTo(CommandFrame.STATE_DISARMED);
        assertThat(dev.weft.safety.SupervisorState.ARMING.ordinal()).isEqualTo(CommandFrame.STATE_ARMING);
        assertThat(dev.weft.safety.SupervisorState.ARMED.ordinal()).isEqualTo(CommandFrame.STATE_ARMED);
        assertThat(dev.weft.safety.SupervisorState.STOPPING.ordinal()).isEqualTo(CommandFrame.STATE_STOPPING);
        assertThat(dev.weft.safety.SupervisorState.FAULTED.ordinal()).isEqualTo(CommandFrame.STATE_FAULTED);
        assertThat(dev.weft.runtime.telemetry.TelemetryFormat.stateName(CommandFrame.STATE_STOPPING)).isEqualTo("stopping");
    }

    @Test
    void anUnknownKindNamesTheKnownOnes() {
        org.assertj.core.api.Assertions.assertThatThrownBy(() -> Ports.provider("can-bus", "port.kind"))
                .hasMessage("port.kind: no port of kind 'can-bus' on the class path; known kinds: csv, discard, sim, udp");
    }

    @ParameterizedTest
    @MethodSource("kinds")
    void emitsOneFramePerCallCountsThemAndClosesTwice(String kind) throws Exception {
        CommandPort p = create(kind);
        p.open(3);
        CommandFrame f = new CommandFrame(3);
        for (int i = 0; i < 200; i++) {
            f.tick = i;
            f.positions[0] = 0.001 * i;
            assertThat(p.emit(f)).as("%s frame %d", kind, i).isTrue();
            // one frame per tick of a 5 kHz loop: a port's bounded queue is sized for ticks, not bursts
            java.util.concurrent.locks.LockSupport.parkNanos(200_000);
        }
        assertThat(p.emitted()).isEqualTo(200);
        assertThat(p.dropped()).isZero();
        assertThat(p.faulted()).isFalse();
        assertThat(p.describe()).isNotBlank();
        p.close();
        p.close();
    }

    @ParameterizedTest
    @MethodSource("kinds")
    void anUnknownOptionIsRefusedWithItsKeyPath(String kind) {
        Map<String, Object> options = new LinkedHashMap<>();
        options.put("file", "x.csv");
        options.put("port", 9);
        options.put("rate", 5);
        org.assertj.core.api.Assertions.assertThatThrownBy(() ->
                        Ports.provider(kind, "port.kind").create(new PortOptions("port.options", options, dir)))
                .hasMessageContaining("port.options.rate: unknown option");
    }
}
