"""aerialbook: a fleet antenna register kept as YAML, checked by computation, published as a static site."""

__version__ = "0.1.0"
