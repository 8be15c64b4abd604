Order 2 is always counted
--deflate-budget
--svg
conditional_entropy_bits
