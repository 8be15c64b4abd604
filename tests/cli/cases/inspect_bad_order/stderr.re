Run with --help
