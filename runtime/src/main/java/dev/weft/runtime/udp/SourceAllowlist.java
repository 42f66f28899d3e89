package dev.weft.runtime.udp;

import dev.weft.runtime.port.PortOptions;
import java.net.InetAddress;
import java.net.UnknownHostException;
import java.util.ArrayList;
import java.util.List;
import java.util.regex.Pattern;

/**
 * The source addresses a receiver accepts datagrams from: a list of address prefixes written as
 * {@code 192.168.7.20} (one address), {@code 127.0.0.0/8} (a prefix) or the IPv6 forms
 * {@code ::1} and {@code fd00::/8}. Only literal addresses; no name is ever looked up.
 *
 * <p>Matching reads the address bytes through {@link InetAddress#getAddress()}, which returns a
 * fresh copy; the receiver therefore remembers the verdict for the last {@code InetAddress}
 * object it saw. The JDK's datagram channel hands back the same address object while the source
 * stays the same, so a steady sender costs no allocation (see {@link UdpStateReceiver}).
 *
 * <p>Immutable; thread-safe.
 */
final class SourceAllowlist {

    /** Loopback only: the IPv4 loopback block 127.0.0.0/8 (RFC 1122, section 3.2.1.3) and ::1 (RFC 4291, section 2.5.3). */
    static final List<String> LOOPBACK = List.of("127.0.0.0/8", "::1");

    private static final Pattern IPV4 = Pattern.compile("(25[0-5]|2[0-4]\\d|1\\d\\d|[1-9]?\\d)(\\.(25[0-5]|2[0-4]\\d|1\\d\\d|[1-9]?\\d)){3}");

    private final byte[][] prefixes;
    private final int[] bits;
    private final List<String> entries;

    private SourceAllowlist(byte[][] prefixes, int[] bits, List<String> entries) {
        this.prefixes = prefixes;
        this.bits = bits;
        this.entries = entries;
    }

    /**
     * Reads the list under {@code key}, recording a problem for each bad entry (as {@code key[i]}).
     */
    static SourceAllowlist read(PortOptions options, String key) {
        List<String> raw = options.textList(key, LOOPBACK);
        if (raw.isEmpty()) {
            options.problem(key, "must name at least one address (an empty list would reject every datagram)");
        }
        List<byte[]> prefixes = new ArrayList<>();
        List<Integer> bits = new ArrayList<>();
        List<String> kept = new ArrayList<>();
        for (int i = 0; i < raw.size(); i++) {
            String entry = raw.get(i).strip();
            int slash = entry.indexOf('/');
            String address = slash < 0 ? entry : entry.substring(0, slash);
            InetAddress parsed = literal(address);
            if (parsed == null) {
                options.problem(key + "[" + i + "]", "must be an IP address or address/prefix such as 127.0.0.0/8, got \"" + raw.get(i) + "\"");
                continue;
            }
            byte[] bytes = parsed.getAddress();
            int max = bytes.length * 8;
            int prefix = max;
            if (slash >= 0) {
                String length = entry.substring(slash + 1);
                prefix = length.matches("\\d{1,3}") ? Integer.parseInt(length) : -1;
                if (prefix < 0 || prefix > max) {
                    options.problem(key + "[" + i + "]", "prefix length must be 0 to " + max + ", got \"" + length + "\"");
                    continue;
                }
            }
            prefixes.add(bytes);
            bits.add(prefix);
            kept.add(entry);
        }
        int[] b = new int[bits.size()];
        for (int i = 0; i < b.length; i++) {
            b[i] = bits.get(i);
        }
        return new SourceAllowlist(prefixes.toArray(new byte[0][]), b, List.copyOf(kept));
    }

    /**
     * Parses a literal IPv4 (dotted quad) or IPv6 address without any name lookup.
     *
     * @return the address, or null when {@code text} is not a literal address
     */
    static InetAddress literal(String text) {
        boolean v4 = IPV4.matcher(text).matches();
        boolean v6 = text.indexOf(':') >= 0 && text.matches("[0-9A-Fa-f:.]+");
        if (!v4 && !v6) {
            return null;
        }
        try {
            // A literal is parsed, never looked up (java.net.InetAddress#getByName, "If the host is a literal IP address...").
            return InetAddress.getByName(text);
        } catch (UnknownHostException e) {
            return null;
        }
    }

    /** True when {@code address} falls under one of the entries. Allocates one copy of the address bytes. */
    boolean allows(InetAddress address) {
        byte[] a = address.getAddress();
        for (int e = 0; e < prefixes.length; e++) {
            if (matches(prefixes[e], bits[e], a)) {
                return true;
            }
        }
        return false;
    }

    private static boolean matches(byte[] prefix, int bits, byte[] a) {
        if (prefix.length != a.length) {
            return false;
        }
        int whole = bits / 8;
        for (int i = 0; i < whole; i++) {
            if (prefix[i] != a[i]) {
                return false;
            }
        }
        int rest = bits % 8;
        if (rest == 0) {
            return true;
        }
        int mask = (0xFF << (8 - rest)) & 0xFF;
        return (prefix[whole] & mask) == (a[whole] & mask);
    }

    /** The entries as written (trimmed), for messages. */
    List<String> entries() {
        return entries;
    }

    /** True when some entry is of the family whose addresses have {@code bytes} bytes (4 for IPv4, 16 for IPv6). */
    boolean hasFamily(int bytes) {
        for (byte[] p : prefixes) {
            if (p.length == bytes) {
                return true;
            }
        }
        return false;
    }
}
