"""A record copy that notes which fields a pure check reads, so its result can be reused.

Checks are pure functions of the record fields they read: a record that agrees, value for value, on
every field a check has read takes the same path and gets the same result. The review's check memo and
the feeder limits memo both log reads through ``ReadLog``.
"""
from __future__ import annotations


class ReadLog(dict):
    """A copy of a motor record that notes the fields a check reads, and whether it reads them all or writes."""

    __slots__ = ("read", "whole", "written")

    def __init__(self, record: dict) -> None:
        super().__init__(record)
        self.read: set = set()
        self.whole = self.written = False

    def __getitem__(self, key):
        self.read.add(key)
        return dict.__getitem__(self, key)

    def get(self, key, default=None):
        self.read.add(key)
        return dict.get(self, key, default)

    def __contains__(self, key):
        self.read.add(key)
        return dict.__contains__(self, key)


def _noting(flag: str, method: str):
    def call(self, *args, **kwargs):
        setattr(self, flag, True)
        return getattr(dict, method)(self, *args, **kwargs)
    call.__name__ = method
    return call


# Whatever looks at every key (or the key set) reads the whole record; these methods write to it.
for _method in ("__iter__", "__len__", "__repr__", "__eq__", "__ne__", "__reversed__", "__or__", "__ror__",
                "keys", "values", "items", "copy", "__reduce__", "__reduce_ex__"):
    setattr(ReadLog, _method, _noting("whole", _method))
for _method in ("__setitem__", "__delitem__", "__ior__", "pop", "popitem", "setdefault", "update", "clear"):
    setattr(ReadLog, _method, _noting("written", _method))
del _method
