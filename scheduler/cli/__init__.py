"""The command line: argument parsing (:mod:`.main`) and one module per command
(:mod:`.commands`).  The only layer that prints, reads the terminal or writes files."""
