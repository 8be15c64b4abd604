^codedrift check: bad_unknown_key\.table:5: .*unknown key 'lenghts'
