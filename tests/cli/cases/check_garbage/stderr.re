^codedrift check: garbage\.table:[0-9]+: 
