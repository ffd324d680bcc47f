"""lotwise: exact sampling plans for lot acceptance for incoming inspection."""

__version__ = "0.1.0"

