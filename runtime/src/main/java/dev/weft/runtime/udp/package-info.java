/**
 * weft over UDP: the state datagram (robot to weft) and the command datagram (weft to robot),
 * unkeyed (version 1, CRC-32C) or keyed (version 2, session id and HMAC-SHA-256 tag,
 * {@link dev.weft.runtime.udp.DatagramTag}), their codec
 * ({@link dev.weft.runtime.udp.DatagramCodec}), the sequence window, a receiver that is an observation
 * source ({@link dev.weft.runtime.udp.UdpStateReceiver}) and the {@code udp} command port
 * ({@link dev.weft.runtime.udp.UdpCommandPort}). Layouts, reject rules and the safety note are in
 * {@code docs/ports.md}.
 */
package dev.weft.runtime.udp;
