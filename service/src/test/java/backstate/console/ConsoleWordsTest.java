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
        assertEquals(List.of("2nd", "3rd", "4th", "11th", "12th", "13th", "21st", "22nd", "23rd", "101st", "111th",
                "112th", "1001st", "0 units", "1 unit", "2 traces"), inBrowser(dir, """
                Promise.all([import('/console/pages/unit.js'), import('/console/dom.js')]).then(([unit, dom]) => done(
                  [2, 3, 4, 11, 12, 13, 21, 22, 23, 101, 111, 112, 1001].map(unit.ordinal)
                    .concat([dom.counted(0, 'unit'), dom.counted(1, 'unit'), dom.counted(2, 'trace')])));
                """));
    }

    /** ISO 8601 durations (the fleet summary's staleAfter) in words; the text itself when it is not one read here. */
    @Test
    void durations_read_in_hours_and_days(@TempDir Path dir) throws Exception {
        assertEquals(List.of("24 h", "7 d", "2 d 12 h", "90 min", "30 s", "36 h", "P1Y"), inBrowser(dir, """
                import('/console/pages/fleet.js').then(fleet => done(
                  ['PT24H', 'P7D', 'P2DT12H', 'PT90M', 'PT30S', 'PT36H', 'P1Y'].map(fleet.durationWords)));
                """));
    }

    /** What {@code script} hands to done(...), run in a console page of a fresh server, with no console error. */
    private static Object inBrowser(Path dir, String script) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/models");
            Object out = browser.driver.executeAsyncScript("const done = arguments[arguments.length - 1];\n" + script);
            browser.assertNoConsoleErrors();
            return out;
        }
    }

    /** An empty installation leads somewhere: the models page creates a family, and says so on the family's page. */
    @Test
    void a_family_is_created_from_the_models_page_of_an_empty_installation(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            browser.visit(server.base() + "/#/models");
            browser.find("#family-name").sendKeys("pumps");
            browser.find("#family-description").sendKeys("cooling pumps");
            browser.find("form.create-family button[type=submit]").click();
            new org.openqa.selenium.support.ui.WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT)
                    .ignoring(org.openqa.selenium.StaleElementReferenceException.class)
                    .until(d -> !d.findElements(org.openqa.selenium.By.cssSelector("section[data-family='pumps']")).isEmpty());
            assertEquals("Created pumps: publish its first version from a model document below.", browser.message());
            assertEquals("cooling pumps", server.get("/v1/models/pumps").json().get("description").asText());
            browser.visit(server.base() + "/#/fleet/pumps");
            assertEquals(true, browser.find("main").getText().contains("No version of pumps is published yet"));
            browser.visit(server.base() + "/#/models/nosuch");
            assertEquals("No model family is named nosuch. All families", browser.find("[data-field='noSuchFamily']").getText());
            browser.assertNoConsoleErrors();
        }
    }
}
