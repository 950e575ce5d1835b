package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;
import static org.junit.jupiter.api.Assertions.assertTrue;

import backstate.api.TestServer;
import java.nio.file.Path;
import org.junit.jupiter.api.Test;
import org.junit.jupiter.api.io.TempDir;
import org.openqa.selenium.Dimension;
import org.openqa.selenium.Keys;
import org.openqa.selenium.support.ui.WebDriverWait;

/** The shell around the pages: where focus goes after a keyboard navigation, and plots after a resize. */
class ConsoleShellTest {
    @Test
    void a_link_followed_by_enter_puts_focus_on_the_new_pages_heading(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open()) {
            server.publishDemoModels();
            browser.visit(server.base() + "/#/fleet");
            browser.find("nav a[data-section='models']").sendKeys(Keys.ENTER);
            new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d -> "Models".equals(
                    browser.driver.executeScript("return document.activeElement.textContent")));
            assertEquals("H1", browser.driver.executeScript("return document.activeElement.tagName"));
            browser.assertNoConsoleErrors();
        }
    }

    @Test
    void plots_are_redrawn_to_the_new_width_when_the_window_narrows(@TempDir Path dir) throws Exception {
        try (TestServer server = new TestServer(dir); ConsoleBrowser browser = ConsoleBrowser.open(1280, 800)) {
            server.publishDemoModels();
            browser.visit(server.base() + "/#/plan/reefer-40/1");
            new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d ->
                    !browser.findAll("section.plan-results figure.plot canvas").isEmpty());
            long wide = canvasWidth(browser);
            browser.driver.manage().window().setSize(new Dimension(768, 800));
            new WebDriverWait(browser.driver, ConsoleBrowser.PAGE_WAIT).until(d -> canvasWidth(browser) < wide);
            long page = (Long) browser.driver.executeScript("return document.documentElement.scrollWidth");
            long window = (Long) browser.driver.executeScript("return document.documentElement.clientWidth");
            assertTrue(page <= window, "no sideways scroll after the resize: page " + page + " px, window " + window + " px");
            assertEquals(1, browser.findAll("section.plan-results figure.plot canvas").size());
            browser.assertNoConsoleErrors();
        }
    }

    private static long canvasWidth(ConsoleBrowser browser) {
        return (Long) browser.driver.executeScript(
                "return document.querySelector('section.plan-results figure.plot canvas').getBoundingClientRect().width | 0");
    }
}
