package dev.weft.runtime.udp;

import static org.assertj.core.api.Assertions.assertThat;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import dev.weft.runtime.port.PortOptions;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.List;
import java.util.Map;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/** The key file rules and the rule for links off loopback, as the receiver and the port report them. */
class LinkKeyTest {

    @TempDir
    Path dir;

    private List<String> receiverProblems(Map<String, ?> options) {
        try {
            UdpStateReceiver.create(new PortOptions("source.options", options, dir)).close();
        } catch (BadInputException e) {
            return e.problems().stream().map(Problem::toString).toList();
        }
        return List.of();
    }

    private List<String> portProblems(Map<String, ?> options) {
        try {
            UdpCommandPort.create(new PortOptions("port.options", options, dir)).close();
        } catch (BadInputException e) {
            return e.problems().stream().map(Problem::toString).toList();
        }
        return List.of();
    }

    @Test
    void aPrivateKeyFileIsAcceptedRelativeToTheConfigurationFolder() throws Exception {
        Loopback.keyFile(dir, "link.key", Loopback.key(0), "rw-------");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "link.key"))).isEmpty();
        assertThat(portProblems(Map.of("port", 9, "key_file", "link.key"))).isEmpty();
        Loopback.keyFile(dir, "owner-read.key", Loopback.key(0), "r--------");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "owner-read.key"))).isEmpty();
    }

    @Test
    void aKeyFileOthersCanReadIsRefusedWithItsPathAndMode() throws Exception {
        Path f = Loopback.keyFile(dir, "open.key", Loopback.key(0), "rw-r--r--");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "open.key"))).containsExactly(
                "source.options.key_file: the key file " + f.toAbsolutePath() + " has mode 0644 (rw-r--r--): a key file must"
                        + " not be readable or writable by group or others; run chmod 600 " + f.toAbsolutePath());
        Path g = Loopback.keyFile(dir, "group.key", Loopback.key(0), "rw--w----");
        assertThat(portProblems(Map.of("port", 9, "key_file", "group.key"))).singleElement().asString()
                .startsWith("port.options.key_file: the key file " + g.toAbsolutePath() + " has mode 0620 (rw--w----)");
    }

    @Test
    void aMissingOrOddKeyFileIsRefused() throws Exception {
        Path missing = dir.resolve("none.key").toAbsolutePath();
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "none.key"))).containsExactly(
                "source.options.key_file: key file not found: " + missing);
        Files.createDirectory(dir.resolve("folder.key"));
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "folder.key"))).containsExactly(
                "source.options.key_file: the key file " + dir.resolve("folder.key").toAbsolutePath() + " is not a regular file");
        Path shortKey = Loopback.keyFile(dir, "short.key", new byte[16], "rw-------");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "short.key"))).containsExactly(
                "source.options.key_file: the key file " + shortKey.toAbsolutePath() + " holds 32 hex digits; it must hold"
                        + " 64 to 128, an even number (32 to 64 bytes)");
        Path text = dir.resolve("text.key");
        Files.writeString(text, "0011 2233\nzz" + "00".repeat(40));
        Files.setPosixFilePermissions(text, PosixFilePermissions.fromString("rw-------"));
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "text.key"))).containsExactly(
                "source.options.key_file: the key file " + text.toAbsolutePath() + " holds a character other than a hex digit"
                        + " or white space at byte 10; it must hold the key as 64 to 128 hex digits");
        Path big = dir.resolve("big.key");
        Files.writeString(big, "0".repeat(5_000));
        Files.setPosixFilePermissions(big, PosixFilePermissions.fromString("rw-------"));
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "key_file", "big.key"))).containsExactly(
                "source.options.key_file: the key file " + big.toAbsolutePath() + " is 5000 bytes; a key file holds 64 to 128 hex digits");
    }

    @Test
    void theKeyIsParsedAsHexIgnoringWhiteSpace() throws Exception {
        Path f = dir.resolve("spaced.key");
        Files.writeString(f, "  000102030405060708090a0b0c0d0e0f\r\n\t101112131415161718191A1B1C1D1E1F\n");
        Files.setPosixFilePermissions(f, PosixFilePermissions.fromString("rw-------"));
        PortOptions o = new PortOptions("source.options", Map.of("key_file", "spaced.key"), dir);
        LinkKey key = LinkKey.read(o, "key_file");
        o.finish();
        // The tag of the worked example (docs/ports.md; computed with Python's hmac module) under this key.
        byte[] expected = ReferenceDatagrams.keyedState(Loopback.key(0), 0x1122334455667788L, 1, 1_000_000_000L, 0.5, -1.25);
        byte[] mine = DatagramCodecFixture.keyedState(key.newTag(), 0x1122334455667788L, 1, 1_000_000_000L, 0.5, -1.25);
        assertThat(mine).isEqualTo(expected);
        assertThat(key.toString()).isEqualTo("key from " + f.toAbsolutePath()).doesNotContain("0001");
    }

    @Test
    void anAddressOffLoopbackNeedsAKeyOrAReason() throws Exception {
        // 192.0.2.0/24 is TEST-NET-1 (RFC 5737): never bound or sent to here, only configured.
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "bind", "192.0.2.10", "allow", List.of("192.0.2.0/24"))))
                .containsExactly("source.options.bind: is \"192.0.2.10\", not a loopback address, and no key_file is set:"
                        + " anyone who can reach that network could steer the robot; set key_file, or set"
                        + " unauthenticated_reason to run unauthenticated anyway");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "bind", "0.0.0.0"))).singleElement().asString()
                .startsWith("source.options.bind: is \"0.0.0.0\", not a loopback address");
        assertThat(portProblems(Map.of("port", 9, "host", "192.0.2.10"))).singleElement().asString()
                .startsWith("port.options.host: is \"192.0.2.10\", not a loopback address, and no key_file is set");

        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "bind", "192.0.2.10", "allow", List.of("192.0.2.0/24"),
                "unauthenticated_reason", "bench cable, robot powered off"))).isEmpty();
        assertThat(portProblems(Map.of("port", 9, "host", "192.0.2.10", "unauthenticated_reason", "bench cable"))).isEmpty();
        Loopback.keyFile(dir, "link.key", Loopback.key(0), "rw-------");
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "bind", "192.0.2.10", "allow", List.of("192.0.2.0/24"),
                "key_file", "link.key"))).isEmpty();

        assertThat(portProblems(Map.of("port", 9, "unauthenticated_reason", " "))).containsExactly(
                "port.options.unauthenticated_reason: must not be empty: say why the link may run without a key");
        assertThat(portProblems(Map.of("port", 9, "key_file", "link.key", "unauthenticated_reason", "x"))).containsExactly(
                "port.options.unauthenticated_reason: is set, but so is key_file: a keyed link is authenticated; remove one of them");
    }

    @Test
    void theWindowOptionsAreChecked() {
        assertThat(receiverProblems(Map.of("port", 0, "size", 2, "sequence_window", 0, "resync_silence_ms", 70_000)))
                .containsExactly(
                        "source.options.sequence_window: must be in [1, 1000000], got 0",
                        "source.options.resync_silence_ms: must be in [1, 60000], got 70000");
    }
}
