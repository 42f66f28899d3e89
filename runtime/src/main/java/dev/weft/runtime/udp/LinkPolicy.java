package dev.weft.runtime.udp;

import dev.weft.runtime.port.PortOptions;
import java.net.InetAddress;
import org.slf4j.Logger;

/**
 * The rule for links without a key: an address other than loopback (the state receiver's
 * {@code bind}, the command port's {@code host} or {@code bind}) needs a {@code key_file}, or an
 * explicit {@code unauthenticated_reason} that the link is started without one anyway.
 */
final class LinkPolicy {

    /** The option that accepts an unauthenticated link off loopback. */
    static final String REASON = "unauthenticated_reason";
    /** The option naming the key file. */
    static final String KEY_FILE = "key_file";

    private LinkPolicy() {
    }

    /**
     * Reads {@link #REASON} and checks the rule for one address, recording a problem under
     * {@code addressKey} when it is broken.
     *
     * @param address the resolved address, or null when it could not be read (then nothing is checked)
     * @return the reason when the link goes off loopback without a key on its strength (the caller
     *     logs it as a warning at start); null otherwise
     */
    static String unauthenticatedReason(PortOptions options, String addressKey, String addressText, InetAddress address) {
        boolean keyed = options.has(KEY_FILE);
        String reason = options.text(REASON, null);
        if (reason != null && reason.isBlank()) {
            options.problem(REASON, "must not be empty: say why the link may run without a key");
            return null;
        }
        if (reason != null && keyed) {
            options.problem(REASON, "is set, but so is " + KEY_FILE + ": a keyed link is authenticated; remove one of them");
            return null;
        }
        if (address == null || keyed || address.isLoopbackAddress()) {
            return null;
        }
        if (reason == null) {
            options.problem(addressKey, "is \"" + addressText + "\", not a loopback address, and no " + KEY_FILE
                    + " is set: anyone who can reach that network could steer the robot; set " + KEY_FILE
                    + ", or set " + REASON + " to run unauthenticated anyway");
            return null;
        }
        return reason;
    }

    /** The warning a link that runs off loopback without a key logs when it starts. */
    static void warnUnauthenticated(Logger log, String where, InetAddress address, String reason) {
        log.warn("{} = {} is not a loopback address and the link has no key; running unauthenticated as {}",
                where, address.getHostAddress(), reason);
    }
}
