newline stripped
--rate
