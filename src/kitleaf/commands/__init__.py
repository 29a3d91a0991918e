"""The CLI's commands, one module each, named as the command; each registers itself when
imported, and the CLI imports only the one it runs."""
