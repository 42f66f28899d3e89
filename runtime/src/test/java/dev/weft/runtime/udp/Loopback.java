package dev.weft.runtime.udp;

import dev.weft.runtime.port.PortOptions;
import java.io.IOException;
import java.lang.management.ManagementFactory;
import java.net.InetAddress;
import java.net.InetSocketAddress;
import java.nio.ByteBuffer;
import java.nio.channels.DatagramChannel;
import java.nio.file.Files;
import java.nio.file.Path;
import java.nio.file.attribute.PosixFilePermissions;
import java.util.Map;
import java.util.concurrent.TimeUnit;
import java.util.concurrent.locks.LockSupport;
import java.util.function.BooleanSupplier;

/** Test helpers for real sockets on the loopback range 127.0.0.0/8 only. */
final class Loopback {

    static final com.sun.management.ThreadMXBean THREADS =
            (com.sun.management.ThreadMXBean) ManagementFactory.getThreadMXBean();

    private Loopback() {
    }

    static PortOptions options(String path, Map<String, ?> values) {
        return new PortOptions(path, values, Path.of("."));
    }

    static InetAddress address(String literal) {
        InetAddress a = SourceAllowlist.literal(literal);
        if (a == null || !a.isLoopbackAddress()) {
            throw new IllegalArgumentException("tests use loopback addresses only, got " + literal);
        }
        return a;
    }

    /** An unconnected channel bound to {@code literal} (a 127.x address) on a free port. */
    static DatagramChannel bound(String literal) throws IOException {
        DatagramChannel ch = DatagramChannel.open(java.net.StandardProtocolFamily.INET);
        ch.bind(new InetSocketAddress(address(literal), 0));
        return ch;
    }

    static void send(DatagramChannel from, byte[] datagram, int port) throws IOException {
        from.send(ByteBuffer.wrap(datagram), new InetSocketAddress(address("127.0.0.1"), port));
    }

    /** Polls {@code done} until true or {@code millis} pass; returns its last answer. */
    static boolean await(BooleanSupplier done, long millis) {
        long deadline = System.nanoTime() + TimeUnit.MILLISECONDS.toNanos(millis);
        while (!done.getAsBoolean()) {
            if (System.nanoTime() - deadline > 0) {
                return done.getAsBoolean();
            }
            LockSupport.parkNanos(TimeUnit.MICROSECONDS.toNanos(50));
        }
        return true;
    }

    /** A key file holding {@code key} as hex text, with mode {@code mode} (such as "rw-------"). */
    static Path keyFile(Path dir, String name, byte[] key, String mode) throws IOException {
        Path f = dir.resolve(name);
        StringBuilder hex = new StringBuilder();
        for (byte b : key) {
            hex.append(String.format("%02x", b & 0xFF));
        }
        Files.writeString(f, hex + "\n");
        Files.setPosixFilePermissions(f, PosixFilePermissions.fromString(mode));
        return f;
    }

    /** 32 key bytes {@code first, first + 1, …}. */
    static byte[] key(int first) {
        byte[] k = new byte[32];
        for (int i = 0; i < k.length; i++) {
            k[i] = (byte) (first + i);
        }
        return k;
    }

    static long allocated(Thread t) {
        return THREADS.getThreadAllocatedBytes(t.getId());
    }
}
