package backstate.api;

import io.micrometer.core.instrument.Gauge;
import io.micrometer.core.instrument.MeterRegistry;
import io.micrometer.core.instrument.binder.jvm.ClassLoaderMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmGcMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmMemoryMetrics;
import io.micrometer.core.instrument.binder.jvm.JvmThreadMetrics;
import io.micrometer.core.instrument.binder.system.ProcessorMetrics;

/**
 * The JVM's and the process's meters on /metrics, from Micrometer's binders: memory by pool
 * ({@code jvm_memory_*}), garbage collection ({@code jvm_gc_*}), threads ({@code jvm_threads_*}),
 * loaded classes ({@code jvm_classes_*}) and CPU ({@code process_cpu_usage}, {@code system_cpu_*});
 * and which build runs, {@code backstate_build_info{version="…"} 1} (the Prometheus convention for
 * build facts as the labels of a constant gauge), so replicas of different builds can be told apart.
 */
public final class ProcessMeters implements AutoCloseable {
    private final JvmGcMetrics gc;

    private ProcessMeters(JvmGcMetrics gc) {
        this.gc = gc;
    }

    /** The build-facts gauge's name as Micrometer writes it; Prometheus shows {@code backstate_build_info}. */
    static final String BUILD_INFO = "backstate.build.info";

    public static ProcessMeters bind(MeterRegistry registry, String version) {
        Gauge.builder(BUILD_INFO, () -> 1).description("the build this process runs, as its labels")
                .tag("version", version).register(registry);
        new JvmMemoryMetrics().bindTo(registry);
        new JvmThreadMetrics().bindTo(registry);
        new ClassLoaderMetrics().bindTo(registry);
        new ProcessorMetrics().bindTo(registry);
        JvmGcMetrics gc = new JvmGcMetrics();
        gc.bindTo(registry);
        return new ProcessMeters(gc);
    }

    /** Stops listening for GC notifications (the only binder that holds a resource). */
    @Override
    public void close() {
        gc.close();
    }
}
