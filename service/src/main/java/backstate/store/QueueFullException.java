package backstate.store;

/** A submission was refused because the queue already holds as many jobs as allowed. */
public final class QueueFullException extends Exception {

    private final int queued;

    public QueueFullException(int queued, int maxQueued) {
        super("queue full: " + queued + " jobs queued, at most " + maxQueued + " allowed");
        this.queued = queued;
    }

    /** How many jobs were queued when the submission was refused. */
    public int queued() {
        return queued;
    }
}
