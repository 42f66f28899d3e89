package dev.weft.runtime.cli;

/** The hazard caution the command line shows first. */
final class Caution {

    static final String LINE_1 = "CAUTION: weft commands machines that can injure people. It is not a safety-rated";
    static final String LINE_2 = "component. A hardware emergency stop and a safety-rated controller stay in charge.";
    static final String LINE_3 = "Do a risk assessment, dry-run first, and defer to local codes and licensed practice.";

    private Caution() {
    }

    static void print(java.io.PrintWriter out) {
        out.println(LINE_1);
        out.println(LINE_2);
        out.println(LINE_3);
        out.println();
    }
}
