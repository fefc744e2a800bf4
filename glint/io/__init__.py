"""Input/output (layer 3): output naming, the output-set writer, GeoTIFF/COG,
CF-NetCDF, PNG quicklooks and GeoJSON."""
