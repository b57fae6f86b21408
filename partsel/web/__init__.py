"""A local page and JSON API over the same job calls as the CLI (``partsel serve``)."""
