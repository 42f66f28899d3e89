package dev.weft.runtime.recording;

import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.util.ArrayList;
import java.util.List;

/**
 * The problems found in one recording, in the order found. The first {@link #SHOWN_MAX} are kept;
 * the rest are only counted, so a file that is wrong on every line costs no memory per problem and
 * the message says how many more there are. Not thread-safe.
 */
final class ProblemList {

    /** The most problems one message lists. */
    static final int SHOWN_MAX = 20;

    private final String file;
    private final List<Problem> shown = new ArrayList<>();
    private int total;

    ProblemList(String file) {
        this.file = file;
    }

    void add(String where, String what) {
        total++;
        if (shown.size() < SHOWN_MAX) {
            shown.add(new Problem(where, what));
        }
    }

    /** Every problem found so far, including those not kept. */
    int total() {
        return total;
    }

    /** @throws BadInputException with the kept problems and, when some were dropped, how many */
    void throwIfAny() throws BadInputException {
        if (total == 0) {
            return;
        }
        List<Problem> out = new ArrayList<>(shown);
        if (total > shown.size()) {
            int more = total - shown.size();
            out.add(new Problem(file, more + " more problem" + (more == 1 ? "" : "s") + " not shown (" + total
                    + " in all; the first " + SHOWN_MAX + " are listed)"));
        }
        throw new BadInputException(out);
    }
}
