^codedrift train: no-such-dir/x\.table: .*No such file or directory
