"""Judgement: both models side by side as rows with verdicts
(:mod:`.check`), the design margins (:mod:`.margins`), where a difference
comes from (:mod:`.breakdown`) and the stored baseline (:mod:`.baseline`)."""
