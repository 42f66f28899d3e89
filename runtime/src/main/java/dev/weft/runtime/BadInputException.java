package dev.weft.runtime;

import java.util.List;

/**
 * Input that weft refuses before anything starts: a configuration, a model, a recording or a
 * packet layout. It carries every problem found, each with the place it was found (a key path,
 * a tensor name, a file and line), so a user fixes them all in one pass.
 */
public final class BadInputException extends Exception {

    private static final long serialVersionUID = 1L;

    /** One problem: where it is, and what is wrong there. */
    public record Problem(String where, String what) {
        @Override
        public String toString() {
            return where + ": " + what;
        }
    }

    private final transient List<Problem> problems;

    public BadInputException(List<Problem> problems) {
        super(render(problems));
        if (problems.isEmpty()) {
            throw new IllegalArgumentException("a BadInputException needs at least one problem");
        }
        this.problems = List.copyOf(problems);
    }

    public BadInputException(String where, String what) {
        this(List.of(new Problem(where, what)));
    }

    /** The problems in the order they were found; never empty. */
    public List<Problem> problems() {
        return problems;
    }

    private static String render(List<Problem> problems) {
        if (problems.size() == 1) {
            return problems.get(0).toString();
        }
        StringBuilder b = new StringBuilder(problems.size() + " problems:");
        for (Problem p : problems) {
            b.append(System.lineSeparator()).append("  ").append(p);
        }
        return b.toString();
    }
}
