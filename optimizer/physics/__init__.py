"""Stage physics: the transistor model, bias, small signal, swing, large signal and distortion,
response, ratings, Monte Carlo, the exact nodal solver and analysis, and the SPICE decks.
Kind-free: each kind of stage supplies its own circuit and formulas (optimizer/kinds)."""
