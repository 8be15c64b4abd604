^Usage: codedrift compare
--table
--svg
--top
training counts
js_divergence_bits
Exit codes: 0 ok, 1 invalid input
