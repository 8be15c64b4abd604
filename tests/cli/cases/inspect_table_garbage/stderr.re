^codedrift inspect: garbage\.table:[0-9]+: 
