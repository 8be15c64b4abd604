escape comes last
ties in symbol order
