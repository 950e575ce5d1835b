package backstate.cli;

import java.io.ByteArrayOutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;

/** An offline command run in-process: its exit code and what it printed to stdout and stderr. */
public record CommandRun(int exit, String out, String err) {

    /** A command's entry point, as SolveCommand.run and CompareVersionsCommand.run are. */
    @FunctionalInterface
    public interface Command {
        int run(String[] args, PrintStream out, PrintStream err);
    }

    public static CommandRun of(Command command, String... args) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        ByteArrayOutputStream err = new ByteArrayOutputStream();
        int exit = command.run(args, new PrintStream(out, true, StandardCharsets.UTF_8),
                new PrintStream(err, true, StandardCharsets.UTF_8));
        return new CommandRun(exit, out.toString(StandardCharsets.UTF_8), err.toString(StandardCharsets.UTF_8));
    }
}
