package backstate.console;

import static org.junit.jupiter.api.Assertions.assertEquals;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.nio.file.Files;
import java.nio.file.Path;
import java.time.Duration;
import java.util.List;
import java.util.logging.Level;
import org.junit.jupiter.api.Assumptions;
import org.openqa.selenium.By;
import org.openqa.selenium.OutputType;
import org.openqa.selenium.WebElement;
import org.openqa.selenium.chrome.ChromeDriver;
import org.openqa.selenium.chrome.ChromeDriverService;
import org.openqa.selenium.chrome.ChromeOptions;
import org.openqa.selenium.logging.LogEntry;
import org.openqa.selenium.logging.LogType;
import org.openqa.selenium.logging.LoggingPreferences;
import org.openqa.selenium.support.ui.WebDriverWait;

/**
 * Debian's headless Chromium driven through chromium-driver by Selenium, for the console tests. The
 * browser runs with a fresh profile and with its background networking off (this machine's network is
 * closed); as root it needs --no-sandbox. Where the browser is missing the tests are skipped, unless
 * BACKSTATE_REQUIRE_BROWSER=1 (set by .ci/run, which installs it), where they fail.
 */
public final class ConsoleBrowser implements AutoCloseable {

    static final Path CHROMIUM = Path.of(System.getenv().getOrDefault("BACKSTATE_CHROMIUM", "/usr/bin/chromium"));
    static final Path CHROMEDRIVER = Path.of(System.getenv().getOrDefault("BACKSTATE_CHROMEDRIVER", "/usr/bin/chromedriver"));
    /** Where screenshots go for review (service/target/console-screenshots when run by Maven). */
    static final Path SCREENSHOTS = Path.of("target", "console-screenshots");
    /** A hang guard for page loads, not a timing assertion. */
    static final Duration PAGE_WAIT = Duration.ofSeconds(30);

    public final ChromeDriver driver;
    private final Path profile;

    private ConsoleBrowser(ChromeDriver driver, Path profile) {
        this.driver = driver;
        this.profile = profile;
    }

    /** A browser at 1280×800, or the test is skipped (or failed, on CI) when none is installed. */
    public static ConsoleBrowser open() {
        return open(1280, 800);
    }

    public static ConsoleBrowser open(int width, int height) {
        boolean installed = Files.isExecutable(CHROMIUM) && Files.isExecutable(CHROMEDRIVER);
        if (!installed && "1".equals(System.getenv("BACKSTATE_REQUIRE_BROWSER"))) {
            throw new IllegalStateException("BACKSTATE_REQUIRE_BROWSER=1 but " + CHROMIUM + " or " + CHROMEDRIVER
                    + " is missing (apt-get install chromium chromium-driver)");
        }
        Assumptions.assumeTrue(installed, "no " + CHROMIUM + " and " + CHROMEDRIVER + ": console tests skipped");
        try {
            Path profile = Files.createTempDirectory("backstate-chromium");
            ChromeOptions options = new ChromeOptions();
            options.setBinary(CHROMIUM.toFile());
            options.addArguments("--headless=new", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                    "--disable-background-networking", "--disable-component-update", "--disable-sync",
                    "--disable-dev-shm-usage", "--user-data-dir=" + profile, "--window-size=" + width + "," + height);
            LoggingPreferences logs = new LoggingPreferences();
            logs.enable(LogType.BROWSER, Level.ALL);
            options.setCapability("goog:loggingPrefs", logs);
            ChromeDriverService service = new ChromeDriverService.Builder().usingDriverExecutable(CHROMEDRIVER.toFile())
                    .usingAnyFreePort().build();
            return new ConsoleBrowser(new ChromeDriver(service, options), profile);
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    /** Opens a console address (e.g. base + "/#/models") and waits until its page has rendered. */
    public void visit(String url) {
        driver.get(url);
        awaitRendered();
    }

    /** Waits until the page's main element says it is ready (the router sets data-state). */
    public void awaitRendered() {
        new WebDriverWait(driver, PAGE_WAIT).until(d -> "ready".equals(
                d.findElement(By.id("page")).getAttribute("data-state")));
    }

    public WebElement find(String css) {
        return driver.findElement(By.cssSelector(css));
    }

    public List<WebElement> findAll(String css) {
        return driver.findElements(By.cssSelector(css));
    }

    /** Browser console messages at SEVERE (errors, failed loads) since the last call. */
    public List<String> consoleErrors() {
        return driver.manage().logs().get(LogType.BROWSER).getAll().stream()
                .filter(e -> e.getLevel().intValue() >= Level.SEVERE.intValue()).map(LogEntry::getMessage).toList();
    }

    public void assertNoConsoleErrors() {
        assertEquals(List.of(), consoleErrors(), "browser console errors or failed requests");
    }

    /** The message line's text; empty when hidden. */
    public String message() {
        WebElement m = find("#message");
        return m.isDisplayed() ? m.getText() : "";
    }

    /** Writes a PNG of the window under target/console-screenshots for review; returns its path. */
    public Path screenshot(String name) {
        try {
            Files.createDirectories(SCREENSHOTS);
            Path file = SCREENSHOTS.resolve(name + ".png");
            Files.write(file, driver.getScreenshotAs(OutputType.BYTES));
            return file;
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
    }

    @Override
    public void close() {
        driver.quit();
        try (var files = Files.walk(profile)) {
            files.sorted(java.util.Comparator.reverseOrder()).forEach(p -> p.toFile().delete());
        } catch (IOException ignored) {
            // A temporary profile left behind is harmless.
        }
    }
}
