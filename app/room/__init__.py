"""The room: its model, limits, validation, file I/O, storage, layout rules and the crop/fixture catalogue.

Imports nothing above it (no engine, no service, no web).
"""
