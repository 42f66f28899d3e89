package dev.weft.runtime.config;

import dev.weft.runtime.port.PortOptions;
import java.nio.file.Path;
import java.util.Map;

/**
 * An observation source or a command port: its kind and its free options, which the provider of
 * that kind reads and checks through {@link PortOptions}.
 *
 * @param kind the provider's kind, such as {@code udp}
 * @param options the options as plain values (String, Integer, Long, BigInteger, Double, Boolean,
 *     List and Map, nested as written); unmodifiable
 * @param optionsPath the key path of the options map, such as {@code port.options}
 * @param baseDir the configuration file's folder, against which relative paths in options resolve
 */
public record EndpointConfig(String kind, Map<String, Object> options, String optionsPath, Path baseDir) {

    public EndpointConfig {
        if (kind == null || options == null || optionsPath == null || baseDir == null) {
            throw new IllegalArgumentException("kind, options, optionsPath and baseDir must be given");
        }
    }

    /**
     * A fresh reader of the options (each call starts a new one, since a reader records which keys
     * were read). Called while a run is built, never from the control loop.
     */
    public PortOptions reader() {
        return new PortOptions(optionsPath, options, baseDir);
    }
}
