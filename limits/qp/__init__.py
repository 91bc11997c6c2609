"""One module per QP: each builds one sparse batched problem per case (an inspectable QPProblem)
and solves it in a second step (problem.solve) into a QPSolution."""

from .force import force_feasibility
from .motion import nearest_motion
from .problem import QPProblem, solve

__all__ = ["QPProblem", "force_feasibility", "nearest_motion", "solve"]
