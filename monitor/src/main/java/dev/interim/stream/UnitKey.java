package dev.interim.stream;

/** A unit of an experiment, by the 96-bit hash of its id (see {@link UnitTable}): what the units changelog is keyed by. */
record UnitKey(String experiment, long hi, int lo) {

    /** The key of {@code unit} in {@code experiment}. */
    static UnitKey of(String experiment, String unit) {
        UnitTable.Hasher h = new UnitTable.Hasher();
        h.hash(unit);
        return new UnitKey(experiment, h.hi, h.lo);
    }
}
