package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;

import backstate.api.TestServer;
import java.nio.file.Path;
import java.util.List;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;

/**
 * The console's counts and ordinals, run in the browser from its own modules: English ordinals
 * (11th–13th, then 21st, 22nd, 23rd…: common practice, no source) and singular nouns for one.
 */
class ConsoleWordsTest {
    @Test
    void ordinals_and_counts_read_as_english(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/models");
            Object words = browser.driver.executeAsyncScript("""
                    const done = arguments[arguments.length - 1];
                    Promise.all([import('/console/pages/unit.js'), import('/console/dom.js')]).then(([unit, dom]) => done(
                      [2, 3, 4, 11, 12, 13, 21, 22, 23, 101, 111, 112, 1001].map(unit.ordinal)
                        .concat([dom.counted(0, 'unit'), dom.counted(1, 'unit'), dom.counted(2, 'trace')])));
                    """);
            assertEquals(List.of("2nd", "3rd", "4th", "11th", "12th", "13th", "21st", "22nd", "23rd", "101st", "111th",
                    "112th", "1001st", "0 units", "1 unit", "2 traces"), words);
            browser.assertNoConsoleErrors();
        }
    }
}
