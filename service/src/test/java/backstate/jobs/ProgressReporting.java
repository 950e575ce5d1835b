package backstate.jobs;

import java.lang.reflect.InvocationTargetException;
import java.lang.reflect.Proxy;
import java.util.function.IntConsumer;

/** A test's view of a job queue that also hears every progress report, for runs paced by hand. */
public final class ProgressReporting {
    private ProgressReporting() {
    }

    /** Hears one progress report after the queue recorded it: the job and its "done" count. */
    public interface Hook {
        void reported(String jobId, int done) throws Exception;
    }

    /** {@code queue} as is, telling {@code onProgress} each reported "done" count after recording it. */
    public static JobQueue reportingTo(JobQueue queue, IntConsumer onProgress) {
        return reportingTo(queue, (jobId, done) -> onProgress.accept(done));
    }

    /** {@code queue} as is, telling {@code onProgress} of each progress report (job ID, done) after recording it. */
    public static JobQueue reportingTo(JobQueue queue, Hook onProgress) {
        return (JobQueue) Proxy.newProxyInstance(JobQueue.class.getClassLoader(), new Class<?>[] {JobQueue.class},
                (proxy, method, args) -> {
                    Object answer;
                    try {
                        answer = method.invoke(queue, args);
                    } catch (InvocationTargetException e) {
                        throw e.getCause();
                    }
                    if (method.getName().equals("reportProgress")) {
                        onProgress.reported((String) args[0], (Integer) args[2]);
                    }
                    return answer;
                });
    }
}
