"""Exceptions raised by panelflow; the CLI turns each into one line on stderr."""


class PanelflowError(Exception):
    """Base class of every error panelflow raises on purpose."""


class InputError(PanelflowError):
    """An input file, section spec or option value cannot be used."""


class GeometryError(PanelflowError):
    """An outline is not a valid body (open, self-intersecting, too few points, overlapping)."""


class SolveError(PanelflowError):
    """The panel system could not be solved (singular or ill-conditioned geometry)."""


class OutputError(PanelflowError):
    """A result file cannot be written (exists, or the folder is not writable)."""


class IncompleteRunError(PanelflowError):
    """A study stopped with sections unfinished (workers lost, or none finishing in time).

    Attributes
    ----------
    finished : list
        Per task, its result, or None where it did not finish (task order).
    unfinished : list of str
        Labels of the sections that did not finish.
    """

    def __init__(self, message: str, finished=(), unfinished=()):
        super().__init__(message)
        self.finished = list(finished)
        self.unfinished = list(unfinished)
