"""The low-energy expansion engine and its result type."""
