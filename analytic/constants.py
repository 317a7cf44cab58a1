"""Physical constants of the analytic package (SI).

mu_0 is the CODATA 2022 vacuum magnetic permeability, the value
scipy.constants.mu_0 carries; it is written out here because importing
scipy.constants parses the whole CODATA table (~0.2 s), a fifth of the
hand command's one-second budget. tests/test_bh.py checks the two agree.
"""

mu_0 = 1.25663706127e-6  # H/m, CODATA 2022
