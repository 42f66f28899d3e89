package dev.weft.runtime.cli;

import picocli.CommandLine;
import picocli.CommandLine.Command;

/** The {@code weft} command line: the entry point of the runnable jar. */
@Command(name = "weft",
        mixinStandardHelpOptions = true,
        versionProvider = WeftCommand.Version.class,
        header = {
            "weft: runs a trained robot policy at a fixed control rate, next to the motors.",
            "",
            Caution.LINE_1,
            Caution.LINE_2,
            Caution.LINE_3,
            ""
        },
        subcommands = {InspectCommand.class, DraftCommand.class, CheckCommand.class, RunCommand.class, DryRunCommand.class,
            DemoCommand.class, CommandLine.HelpCommand.class},
        exitCodeListHeading = "%nExit codes:%n",
        exitCodeList = {
            "0:done",
            "1:ran, and the verdict is no (a check or gate failed)",
            "2:could not run: bad input or usage, with the reason on standard error",
            "3:the control loop stalled during the run (a tick did not complete in time)"
        })
public final class WeftCommand implements Runnable {

    /** Exit code: the command ran and its verdict is a failure. */
    public static final int VERDICT_FAILED = 1;
    /** Exit code: the command could not run (bad input or usage). */
    public static final int COULD_NOT_RUN = 2;
    /** Exit code: the control loop stalled during the run (the loop-stalled alarm was raised). */
    public static final int LOOP_STALLED = 3;

    @CommandLine.Spec
    CommandLine.Model.CommandSpec spec;

    @Override
    public void run() {
        spec.commandLine().usage(spec.commandLine().getOut());
    }

    /** Builds the command line with weft's exit codes and error handling. */
    public static CommandLine commandLine() {
        CommandLine cl = new CommandLine(new WeftCommand());
        cl.setExitCodeExceptionMapper(e -> COULD_NOT_RUN);
        cl.getCommandSpec().exitCodeOnInvalidInput(COULD_NOT_RUN);
        cl.getCommandSpec().exitCodeOnExecutionException(COULD_NOT_RUN);
        return cl;
    }

    public static void main(String[] args) {
        // the HDF5 reader logs every file it opens, and warns about an attribute of its own in every
        // file it wrote (a message with bytes left over); the command line keeps both out of the way
        // and leaves its errors, while weft's own checks name every problem in a recording
        if (System.getProperty("org.slf4j.simpleLogger.log.io.jhdf") == null) {
            System.setProperty("org.slf4j.simpleLogger.log.io.jhdf", "error");
        }
        System.exit(commandLine().execute(args));
    }

    /** The version from the jar's manifest, or "development" when run from classes. */
    static final class Version implements CommandLine.IVersionProvider {
        @Override
        public String[] getVersion() {
            String v = WeftCommand.class.getPackage().getImplementationVersion();
            return new String[] {"weft " + (v == null ? "development" : v)};
        }
    }
}
