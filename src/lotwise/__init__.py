"""lotwise: exact sampling plans for lot acceptance for incoming inspection."""

from lotwise.core.version import __version__

__all__ = ["__version__"]
