"""elimscan: GFN2-xTB barriers for every beta hydrogen of an E2 elimination, beside the geometric rule."""

__version__ = "0.6.1"
