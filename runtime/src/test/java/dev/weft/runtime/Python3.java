package dev.weft.runtime;

import java.util.List;
import java.util.concurrent.TimeUnit;

/** Finds the Python 3 that tests run their NumPy references and helper processes with. */
public final class Python3 {

    private Python3() {
    }

    /**
     * The first of {@code python3} on the PATH and Debian's {@code /usr/bin/python3} that imports
     * NumPy; {@code python3} when neither does (the test then fails on the script's own error).
     */
    public static String withNumpy() {
        for (String candidate : List.of("python3", "/usr/bin/python3")) {
            try {
                Process p = new ProcessBuilder(candidate, "-c", "import numpy").redirectErrorStream(true).start();
                p.getInputStream().readAllBytes();
                if (p.waitFor(60, TimeUnit.SECONDS) && p.exitValue() == 0) {
                    return candidate;
                }
            } catch (java.io.IOException notThere) {
                // try the next one
            } catch (InterruptedException e) {
                Thread.currentThread().interrupt();
                break;
            }
        }
        return "python3";
    }
}
