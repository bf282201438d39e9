"""The map figure: perceptually uniform colour map, labelled colour bar with units, axes."""

import xarray as xr

from seaprofile.gridded import layer_maps, synthetic_field
from seaprofile.plots.maps import map_figure


def test_map_figure_labels_and_colour_map():
    maps = layer_maps(synthetic_field(nlat=5, nlon=6, ndepth=60, max_depth=1500.0))
    fig = map_figure(maps["sonic_layer_depth"])
    ax, cax = fig.axes
    assert "latitude" in ax.get_ylabel() and "longitude" in ax.get_xlabel()
    assert cax.get_ylabel() == "sonic layer depth (m)"
    assert ax.collections[0].get_cmap().name == "viridis"
    assert any("Caution" in t.get_text() for t in fig.texts)


def test_map_refuses_a_3d_array():
    import pytest

    from seaprofile._validate import SeaprofileError

    field = synthetic_field()
    with pytest.raises(SeaprofileError, match="2-D"):
        map_figure(xr.DataArray(field["temperature"].values, dims=("a", "b", "c"), name="t"))
