package dev.weft.safety;

/**
 * A watchdog condition that was turned off on purpose, with the reason given. The runtime logs
 * every one of these at start.
 *
 * @param condition the condition that is not checked
 * @param reason    why, as given to {@link Watchdog.Builder#disable}
 */
public record DisabledCondition(WatchdogCondition condition, String reason) {
}
