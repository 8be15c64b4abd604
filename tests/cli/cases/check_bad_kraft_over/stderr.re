^codedrift check: bad_kraft_over\.table:6: .*Kraft
