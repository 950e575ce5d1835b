package backstate.api;

import java.io.ByteArrayOutputStream;
import java.io.OutputStream;
import java.io.PrintStream;
import java.nio.charset.StandardCharsets;

/**
 * Copies everything written to System.err (where slf4j-simple logs, looking the stream up on
 * each line) while open, and still passes it on; restores the original stream on close.
 */
public final class ConsoleCapture implements AutoCloseable {
    private final PrintStream original = System.err;
    private final ByteArrayOutputStream copy = new ByteArrayOutputStream();

    public ConsoleCapture() {
        System.setErr(new PrintStream(new OutputStream() {
            @Override
            public void write(int b) {
                synchronized (copy) {
                    copy.write(b);
                }
                original.write(b);
            }

            @Override
            public void write(byte[] b, int off, int len) {
                synchronized (copy) {
                    copy.write(b, off, len);
                }
                original.write(b, off, len);
            }
        }, true, StandardCharsets.UTF_8));
    }

    public String text() {
        synchronized (copy) {
            return copy.toString(StandardCharsets.UTF_8);
        }
    }

    @Override
    public void close() {
        System.err.flush();
        System.setErr(original);
    }
}
