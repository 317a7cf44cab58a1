"""The design under check: what the part is, as data.

The case model (:class:`~magcheck.compare.design.case.Case`), its key
grammar and units, the typed table reader the families use, the geometry of
limbs, gaps and windings, the core families and drawn (DXF) cores, and the
core model both field and circuit are built from.  Imports nothing else of
compare but its errors."""
