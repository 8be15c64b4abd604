has no such phase, expected one of steady, firmware, quiet$
