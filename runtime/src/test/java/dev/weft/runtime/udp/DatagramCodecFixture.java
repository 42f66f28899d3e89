package dev.weft.runtime.udp;

import java.nio.ByteBuffer;

/** Datagrams written through the codec itself, as byte arrays, for tests that send them. */
final class DatagramCodecFixture {

    private DatagramCodecFixture() {
    }

    static byte[] keyedState(DatagramTag tag, long session, long sequence, long senderNanos, double... values) {
        ByteBuffer buf = ByteBuffer.allocate(DatagramCodec.stateLength(values.length, true));
        int n = DatagramCodec.keyed(tag, session).encodeState(buf, sequence, senderNanos, values, values.length);
        byte[] b = new byte[n];
        buf.get(0, b);
        return b;
    }
}
