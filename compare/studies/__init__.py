"""Many checks at once: sweeps (:mod:`.sweep`), tolerance studies
(:mod:`.tolerance`), re-checking stored designs (:mod:`.verify`) and the
process pool they share (:mod:`.executor`)."""
