package backstate.api;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertFalse;
import static org.junit.jupiter.api.Assertions.assertTrue;

import org.junit.jupiter.api.Test;

/** What Jetty-level refusals say: its reason for a 4xx, never its text (an exception class) for a 5xx. */
class ProtocolErrorsTest {
    @Test
    void a_4xx_keeps_jettys_short_reason() {
        assertEquals("Invalid Content-Length Value", ProtocolErrors.detail(400, "Invalid Content-Length Value"));
        assertEquals("Bad Request", ProtocolErrors.detail(400, null));
    }

    @Test
    void a_5xx_never_shows_an_exception_class_name() {
        String cut = ProtocolErrors.detail(500, "org.eclipse.jetty.io.EofException");
        assertFalse(cut.contains("org.eclipse"), cut);
        assertTrue(cut.contains("cut off"), cut);
        String stopping = ProtocolErrors.detail(503, "java.lang.IllegalStateException: shutdown");
        assertFalse(stopping.contains("java.lang"), stopping);
        assertTrue(stopping.contains("retry"), stopping);
    }

    @Test
    void a_path_jetty_could_not_decode_is_named_as_the_path() {
        String detail = ProtocolErrors.detail(400, "Bad Request", ProtocolErrors.UNDECODABLE_TARGET);
        assertTrue(detail.contains("%00"), detail);
        assertEquals("path", ProtocolErrors.fields(400, detail).get(0).field());
    }

    @Test
    void every_4xx_carries_an_errors_array_and_a_5xx_none() {
        assertEquals("headers", ProtocolErrors.fields(400, "Illegal character CNTL=0x1").get(0).field());
        assertEquals("body", ProtocolErrors.fields(408, "Request Timeout").get(0).field());
        assertEquals("Transfer-Encoding", ProtocolErrors.fields(400, "Bad Transfer-Encoding, chunked not last").get(0).field());
        assertEquals("request", ProtocolErrors.fields(400, "Bad Request").get(0).field());
        assertEquals(null, ProtocolErrors.fields(505, "Unsupported version"));
    }
}
