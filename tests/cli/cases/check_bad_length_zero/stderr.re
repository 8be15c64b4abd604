^codedrift check: bad_length_zero\.table:6: .*length.* 0
