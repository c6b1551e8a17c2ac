"""The search's tuning numbers, named in one place."""

from __future__ import annotations

from dataclasses import dataclass

__all__ = ["SearchSettings", "SETTINGS"]


@dataclass(frozen=True)
class SearchSettings:
    """Tuning of the genetic search and the polish (not part of a study: they are the method).

    Attributes
    ----------
    crossover_prob : float        probability that a mating pair is crossed at all
    crossover_eta : float         distribution index of simulated binary crossover (Deb & Agrawal 1995)
    mutation_eta : float          distribution index of polynomial mutation (Deb & Goyal 1996)
    topology_share : float        share of survivors kept for topologies otherwise lost
    duplicate_decimals : int      genomes equal to this many decimals are duplicates
    polish_margin : float         constraints are held this far (normalised) inside their bounds in the polish
    polish_steps : int            least-squares steps per design in the final polish (one population call each)
    polish_lowest : int           the final polish starts from this many lowest-error front designs ...
    polish_per_topology : int     ... and this many best designs of every topology in the population
    inject_steps : int            least-squares steps per design in the memetic steps during the search
    inject_per_topology : int     the memetic steps start from this many best designs of every topology
    inject_min_generations : int  runs shorter than this have no memetic steps (at 1/3 and 2/3 of the run)
    max_designs : int             at most this many Pareto designs are returned
    yield_samples : int           parts per design of the in-spec share reported for every Pareto design
    yield_search_samples : int    parts per design of the in-spec share inside the loop (a constraint or
                                  objective): the first ones of the same common random numbers
    """

    crossover_prob: float = 0.9
    crossover_eta: float = 15.0
    mutation_eta: float = 20.0
    topology_share: float = 0.25
    duplicate_decimals: int = 9
    polish_margin: float = 0.01
    polish_steps: int = 40
    polish_lowest: int = 24
    polish_per_topology: int = 2
    inject_steps: int = 25
    inject_per_topology: int = 2
    inject_min_generations: int = 12
    max_designs: int = 24
    yield_samples: int = 200
    yield_search_samples: int = 24


#: the settings every search uses
SETTINGS = SearchSettings()
