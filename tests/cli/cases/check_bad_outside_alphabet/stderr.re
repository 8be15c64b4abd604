^codedrift check: bad_outside_alphabet\.table:7: .*0x1ff
