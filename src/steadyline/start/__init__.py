"""``steadyline start``: a data file -> a commented project.toml of guesses (the package's face).

reading.py profiles the file's columns as a build reads them, guessing.py guesses the metric
from them, writing.py writes the commented file, command.py runs the steps in order.
"""

from .command import PROCESS_TYPES, start
from .guessing import COLUMN_OPTIONS, Guess, StartError, guess
from .writing import render

__all__ = ["COLUMN_OPTIONS", "PROCESS_TYPES", "Guess", "StartError", "guess", "render", "start"]
