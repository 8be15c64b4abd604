^codedrift check: \.: .*directory
