"""Per-trial random streams addressed by stable keys.

One campaign seed roots a :class:`numpy.random.SeedSequence`. Everything drawn
for trial ``i`` by a given purpose (``"sea.components"``, ``"current.gm"``,
...) comes from the child sequence with spawn key ``(i, purpose_key)``, where
``purpose_key`` is a stable 32-bit digest of the purpose name. The varying key
(the trial index) comes first, as recommended by numpy's parallel random
generation guide and Scientific Python SPEC 7.

Because the stream depends only on ``(seed, i, purpose)``, trial ``i`` draws
the same numbers whether it runs alone, in a batch of 10 000, or on another
worker. Noise is drawn in blocks per trial (a whole record at once), never
one step at a time.

References
----------
numpy documentation, "Parallel Random Number Generation" (SeedSequence
spawning); Scientific Python SPEC 7, "Seeding pseudo-random number
generation".
"""

from __future__ import annotations

import zlib
from collections.abc import Callable, Sequence
from dataclasses import dataclass

import numpy as np

from .errors import ParameterError

__all__ = ["TrialStreams", "purpose_key"]


def purpose_key(purpose: str) -> int:
    """Stable 32-bit key of a purpose name (CRC-32 of its UTF-8 bytes).

    Parameters
    ----------
    purpose : str
        Dotted name of what is drawn, e.g. ``"sea.components"``.

    Returns
    -------
    int
        Key in [0, 2**32).
    """
    if not isinstance(purpose, str) or not purpose:
        raise ParameterError("purpose", purpose, "must be a non-empty string")
    return zlib.crc32(purpose.encode("utf-8"))


@dataclass(frozen=True)
class TrialStreams:
    """Random streams for a batch of trials of one campaign.

    Parameters
    ----------
    seed : int
        Campaign seed (a non-negative integer).
    trials : sequence of int
        Global trial indices of the batch, in batch order.

    Examples
    --------
    >>> s = TrialStreams(seed=7, trials=(0, 1, 2))
    >>> x = s.draw("demo", lambda rng: rng.standard_normal(4))
    >>> x.shape
    (3, 4)
    >>> alone = TrialStreams(seed=7, trials=(2,)).draw("demo", lambda rng: rng.standard_normal(4))
    >>> bool((alone[0] == x[2]).all())
    True
    """

    seed: int
    trials: tuple[int, ...]

    def __init__(self, seed: int, trials: Sequence[int] | np.ndarray | int) -> None:
        if isinstance(seed, bool) or not isinstance(seed, (int, np.integer)) or seed < 0:
            raise ParameterError("seed", seed, "must be a non-negative integer")
        if isinstance(trials, (int, np.integer)) and not isinstance(trials, (bool, np.bool_)):
            trials = range(int(trials))
        items = list(np.asarray(trials).ravel()) if isinstance(trials, np.ndarray) else list(trials)
        for i in items:
            if isinstance(i, (bool, np.bool_)) or not isinstance(i, (int, np.integer)) or i < 0:
                raise ParameterError("trials", i, "trial indices must be non-negative integers")
        idx = tuple(int(i) for i in items)
        if len(set(idx)) != len(idx):
            dup = next(i for i in idx if idx.count(i) > 1)
            raise ParameterError("trials", dup, "trial indices must be unique within a batch")
        object.__setattr__(self, "seed", int(seed))
        object.__setattr__(self, "trials", idx)

    @property
    def n_trials(self) -> int:
        """Number of trials in the batch."""
        return len(self.trials)

    def sequence(self, trial: int, purpose: str) -> np.random.SeedSequence:
        """The seed sequence of one trial and purpose."""
        return np.random.SeedSequence(self.seed, spawn_key=(int(trial), purpose_key(purpose)))

    def generators(self, purpose: str) -> list[np.random.Generator]:
        """One fresh PCG64 generator per trial of the batch for ``purpose``.

        Each call returns generators at the start of their streams, so two
        calls with the same purpose give the same numbers.
        """
        return [np.random.Generator(np.random.PCG64(self.sequence(i, purpose))) for i in self.trials]

    def draw(self, purpose: str, sampler: Callable[[np.random.Generator], np.ndarray]) -> np.ndarray:
        """Stack one block of draws per trial.

        Parameters
        ----------
        purpose : str
            Stream name.
        sampler : callable
            ``sampler(rng) -> ndarray``; called once per trial with that
            trial's generator; must return the same shape for every trial.

        Returns
        -------
        ndarray of shape (n_trials, ...)
        """
        blocks = [np.asarray(sampler(rng)) for rng in self.generators(purpose)]
        if not blocks:
            # the shape of one block, from a throwaway generator, for an empty batch
            shape = np.shape(sampler(np.random.Generator(np.random.PCG64(0))))
            return np.empty((0, *shape))
        return np.stack(blocks)

    def subset(self, positions: Sequence[int] | slice) -> TrialStreams:
        """Streams of a sub-batch, selected by position within this batch."""
        idx = np.asarray(self.trials)[positions]
        return TrialStreams(self.seed, np.atleast_1d(idx).tolist())
