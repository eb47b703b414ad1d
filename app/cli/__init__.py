"""The headless command line: the parser, one module per command, and their Qt-free helpers."""
