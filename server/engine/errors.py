"""Exceptions raised by the engine."""


class EngineError(ValueError):
    """Base class: the inputs cannot give a meaningful answer."""


class InputRangeError(EngineError):
    """An input lies outside the physical or validated range of a method."""


class InsufficientDataError(EngineError):
    """The data cannot support an estimate (too few points, too little depletion)."""
