package dev.interim.validity;

import java.util.Comparator;
import java.util.Iterator;
import java.util.NoSuchElementException;
import java.util.PriorityQueue;
import java.util.function.Consumer;

/**
 * The events of units 0, 1, 2, … in time order, generated only as far as they are read: a run that
 * ends at its first stop never pays for the traffic after it. Unit u arrives at time u and none of
 * its events comes earlier, so an event at or before the next unit's arrival is due before anything
 * not yet generated. The order is that of a stable sort by time of all the events as generated (ties
 * in generation order), so the traffic is the same event for event as sorting the whole of it.
 */
final class ArrivalOrder implements Iterator<Traffic.Event> {
    /** Generates unit {@code u}'s events (units come in order 0, 1, 2, …, each once). */
    interface Units {
        void unit(int u, Consumer<Traffic.Event> out);
    }

    private record Pending(Traffic.Event event, long seq) {
    }

    private static final Comparator<Pending> ORDER =
            Comparator.<Pending>comparingDouble(p -> p.event().time()).thenComparingLong(Pending::seq);

    private final int units;
    private final Units source;
    private final PriorityQueue<Pending> queue = new PriorityQueue<>(ORDER);
    private final Consumer<Traffic.Event> add = e -> queue.add(new Pending(e, nextSeq()));
    private int nextUnit;
    private long seq;

    ArrivalOrder(int units, Units source) {
        this.units = units;
        this.source = source;
    }

    private long nextSeq() {
        return seq++;
    }

    @Override
    public boolean hasNext() {
        fill();
        return !queue.isEmpty();
    }

    @Override
    public Traffic.Event next() {
        fill();
        if (queue.isEmpty()) {
            throw new NoSuchElementException();
        }
        return queue.poll().event();
    }

    private void fill() {
        while (nextUnit < units && (queue.isEmpty() || queue.peek().event().time() > nextUnit)) {
            source.unit(nextUnit++, add);
        }
    }
}
