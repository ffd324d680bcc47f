"""lotwise: exact acceptance sampling plans for incoming inspection."""

__version__ = "0.1.0"

