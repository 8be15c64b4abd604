^codedrift check: bad_length\.table:7: .*length.*40
