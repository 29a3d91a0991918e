"""Themes shipped with kitleaf; `default` is the packaged theme a site's own themes override."""
