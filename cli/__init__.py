"""The command line: argument parsing, one thin handler per subcommand, exit codes."""
