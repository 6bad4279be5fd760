"""Subcommands beyond the catalog; filled in as the physics and the search land."""


def register(sub, catalog_arg) -> None:
    """Add the remaining subcommands to the parser ``sub``."""
