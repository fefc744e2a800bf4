"""glint's command line: one module per subcommand, registered in ``main``."""
