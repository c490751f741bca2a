"""The canopy light engine: pure numpy functions, no web or pydantic imports.

Modules, from the ground up:

- :mod:`.distributions` angular intensity of an emitter, normalised to its flux;
- :mod:`.scene` small frozen dataclasses describing emitters, receivers, boxes, walls;
- :mod:`.emitters` quadrature nodes over bars, bar arrays and panels;
- :mod:`.direct` direct irradiance on a receiver grid, with shadows and culling;
- :mod:`.mirror_images` mirror images (specular walls); :mod:`.radiosity` matt-wall patches and their
  exitance; :mod:`.patch_transfer` patches to the canopy map;
- :mod:`.budget` a deterministic ray tally of where every emitted photon goes;
- :mod:`.compute` the chain that turns a scene into per-zone PPFD maps;
- :mod:`.metrics`, :mod:`.dli`, :mod:`.electrical` the figures a grower decides from.
"""
