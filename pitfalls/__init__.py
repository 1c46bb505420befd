"""pitfalls: screens seismic interpretation picks for physics-based pitfalls."""
__version__ = "0.1.0"
