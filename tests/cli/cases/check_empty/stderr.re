^codedrift check: empty\.bin:1: .*empty
