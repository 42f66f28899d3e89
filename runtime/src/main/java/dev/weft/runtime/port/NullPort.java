package dev.weft.runtime.port;

/**
 * Accepts every frame and sends it nowhere; counts them. For benchmarks and for checking a
 * configuration without any output. Not live.
 */
public final class NullPort implements CommandPort {

    private volatile long emitted;

    @Override
    public void open(int joints) {
        // nothing to open
    }

    @Override
    public boolean emit(CommandFrame frame) {
        emitted++;
        return true;
    }

    @Override
    public boolean faulted() {
        return false;
    }

    @Override
    public long emitted() {
        return emitted;
    }

    @Override
    public long dropped() {
        return 0;
    }

    @Override
    public String describe() {
        return "null port: " + emitted + " frames discarded";
    }

    @Override
    public void close() {
        // nothing to close
    }

    /** The {@code discard} kind (named so because a bare {@code null} is an empty value in YAML). */
    public static final class Provider implements CommandPortProvider {
        @Override
        public String kind() {
            return "discard";
        }

        @Override
        public boolean live() {
            return false;
        }

        @Override
        public CommandPort create(PortOptions options) throws dev.weft.runtime.BadInputException {
            options.finish();
            return new NullPort();
        }
    }
}
