package dev.weft.runtime.port;

import dev.weft.runtime.BadInputException;
import java.util.ArrayList;
import java.util.List;
import java.util.ServiceLoader;
import java.util.TreeMap;

/** Finds command port kinds on the class path with {@link ServiceLoader}. */
public final class Ports {

    private Ports() {
    }

    /** Every provider found, by kind (first one wins when two claim a kind). */
    public static TreeMap<String, CommandPortProvider> providers(ClassLoader loader) {
        TreeMap<String, CommandPortProvider> byKind = new TreeMap<>();
        for (CommandPortProvider p : ServiceLoader.load(CommandPortProvider.class, loader)) {
            byKind.putIfAbsent(p.kind(), p);
        }
        return byKind;
    }

    /**
     * The provider of {@code kind}.
     *
     * @param where the key path naming the kind, for the message
     * @throws BadInputException when no provider on the class path has that kind
     */
    public static CommandPortProvider provider(String kind, String where) throws BadInputException {
        TreeMap<String, CommandPortProvider> all = providers(Ports.class.getClassLoader());
        CommandPortProvider p = all.get(kind);
        if (p == null) {
            List<String> kinds = new ArrayList<>(all.keySet());
            throw new BadInputException(where, "no port of kind '" + kind + "' on the class path; known kinds: "
                    + String.join(", ", kinds));
        }
        return p;
    }
}
