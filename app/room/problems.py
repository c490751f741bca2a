"""A problem in a room file (its field path and reason) and the error that carries every problem found."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Problem:
    field: str
    message: str

    def as_dict(self) -> dict[str, str]:
        return {"field": self.field, "message": self.message}


class RoomFileError(ValueError):
    """The document is not a usable room file. ``kind`` says which way."""

    def __init__(self, problems: list[Problem], kind: str = "invalid_room_file") -> None:
        self.problems = problems
        self.kind = kind
        super().__init__("; ".join(f"{p.field}: {p.message}" for p in problems))
