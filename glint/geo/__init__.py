"""Geo (layer 2): grids, CRSs, tie-point lattices and raster readers.

Knows coordinate reference systems (always through pyproj) and grids, reads
input rasters, writes no files.
"""
