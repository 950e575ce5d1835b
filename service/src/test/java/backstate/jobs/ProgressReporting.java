package backstate.jobs;

import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Proxy;
import java.util.function.IntConsumer;

/** A test's view of a job queue that also hears every progress report, for runs paced by hand. */
public final class ProgressReporting {
    private ProgressReporting() {
    }

    /** {@code queue} as is, telling {@code onProgress} each reported "done" count after recording it. */
    public static JobQueue reportingTo(JobQueue queue, IntConsumer onProgress) {
        return (JobQueue) Proxy.newProxyInstance(JobQueue.class.getClassLoader(), new Class<?>[] {JobQueue.class},
                (proxy, method, args) -> {
                    Object answer;
                    try {
                        answer = method.invoke(queue, args);
                    } catch (InvocationTargetException e) {
                        throw e.getCause();
                    }
                    if (method.getName().equals("reportProgress")) {
                        onProgress.accept((Integer) args[2]);
                    }
                    return answer;
                });
    }
}
