^codedrift check: no-such\.table: .*No such file or directory
