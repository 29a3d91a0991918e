"""The CLI's commands, one module each, named as the command; each defines its options and
registers itself when imported (:func:`kitleaf.cli.command`), and the CLI imports only the one
it runs. :data:`ORDER` lists them as ``kitleaf --help`` shows them, with the one-line summary
that help shows without importing any of them. ``options.py`` holds options several share."""

ORDER: tuple[tuple[str, str], ...] = (
    ("new", "write a ready-to-edit guide"),
    ("check", "parse, solve and check every guide without writing anything"),
    ("build", "build the site from a folder of guides"),
    ("proof", "build, show the site on this machine and rebuild on each change"),
    ("specs", "print a guide's computed specs"),
    ("bom", "print a guide's bill of materials, or a batch order for several kits"),
    ("pinpoint", "rank the faults a builder's meter readings point to"),
)
