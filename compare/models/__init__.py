"""The two models run on a case: the hand magnetic-circuit model
(:mod:`.hand`), the finite-element model (:mod:`.fe`), a voltage drive's
magnetizing current (:mod:`.drive`) and two windings' coupling and leakage
(:mod:`.coupling`).  Sits on :mod:`..design`, magcheck.analytic and
magcheck.fem2d."""
