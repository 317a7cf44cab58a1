"""Case files into validated cases: the TOML reader (:mod:`.casefile`)
and variants of a case with keys changed (:mod:`.variants`).

It sits above the models because reading a voltage-driven case resolves
its winding's current with the hand model, and the stack-depth and
leakage checks read the hand model's gap faces and winding pairs."""
