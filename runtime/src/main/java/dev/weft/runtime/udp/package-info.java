/**
 * weft over UDP: the state datagram (robot to weft) and the command datagram (weft to robot),
 * their codec ({@link dev.weft.runtime.udp.DatagramCodec}), a receiver that is an observation
 * source ({@link dev.weft.runtime.udp.UdpStateReceiver}) and the {@code udp} command port
 * ({@link dev.weft.runtime.udp.UdpCommandPort}). Layouts, reject rules and the safety note are in
 * {@code docs/ports.md}.
 */
package dev.weft.runtime.udp;
