"""Input/output (layer 3): the output set (all-or-nothing writing), output
naming, and the writers of each format: GeoTIFF/COG (:mod:`glint.io.geotiff`),
CF-NetCDF (:mod:`glint.io.netcdf`), PNG quicklooks (:mod:`glint.io.quicklook`)
and GeoJSON footprints (:mod:`glint.io.geojson`)."""
