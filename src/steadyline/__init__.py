"""steadyline: baseline and improvement-history displays for improvement projects."""

__version__ = "0.1.0"
