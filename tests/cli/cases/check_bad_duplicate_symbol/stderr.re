^codedrift check: bad_duplicate_symbol\.table:8: .*duplicate
