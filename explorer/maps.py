"""Operating-window maps: the one plotting module of the live app and the review export.

Two layers of work, kept apart so the static export can reuse the first without Python:

* :func:`slice_layers` turns one 2-D slice of a sweep Dataset into plain data (filled bands,
  labelled contour lines, the carbon boundary, the infeasible region and its edge, the grid
  nodes with their values), all in display units (degC, bar) and ready for Bokeh
  ColumnDataSources.
* :func:`map_figure` draws a Bokeh figure with one ColumnDataSource per layer. The app
  replaces the sources' data when a slice or variable changes (no recomputation of
  thermodynamics); the export does the same in the browser with CustomJS from data embedded
  in the page.

Colour levels are fixed over the whole Dataset for each variable, not per slice, so that one
colour means one value on every slice.

The work lives in three modules, re-exported here: :mod:`explorer.map_variables` (what each
map shows and its levels), :mod:`explorer.map_layers` (a slice as plain layers; what every map
of a slice shares is in :mod:`explorer.map_window`, the shared axes and contour geometry in
:mod:`explorer.map_geometry`) and :mod:`explorer.map_figures` (the Bokeh figure).
"""

from __future__ import annotations

from explorer.map_figures import (  # noqa: F401 - re-exported
    LEGEND_LABELS,
    axis_label,
    empty_layers,
    hover_tooltips,
    legend_visibility,
    map_figure,
    restyle_figure,
    show_legend_entries,
    x_axis_label,
)
from explorer.map_geometry import _paths, _polys, x_display, y_display  # noqa: F401
from explorer.map_layers import (  # noqa: F401 - re-exported
    _fmt,
    combine,
    slice_fields,
    slice_layers,
    variable_layers,
)
from explorer.map_variables import (  # noqa: F401 - re-exported
    AXIS_PT,
    BEST_COLOUR,
    CARBON_COLOUR,
    CARBON_LINES,
    CHANGE_PALETTE,
    CHANGE_TOLERANCE,
    COMPARE_ORDER,
    DESIGN_COLOUR,
    EDGE_COLOUR,
    HATCH_COLOUR,
    LABEL_BOX,
    LABEL_PT,
    LEGEND_PT,
    MODES,
    NO_CHANGE_COLOUR,
    OUTLET_CARBON_COLOUR,
    OVERLAY_VARIABLES,
    PLANT_MAP_KEYS,
    REFERENCE_CARBON_COLOUR,
    SELECTED_COLOUR,
    TITLE_PT,
    VARIABLES,
    Variable,
    _band_colours,
    _plant_variables,
    _scale,
    _variables,
    available,
    change_levels,
    change_tolerance,
    change_variable,
    has_change,
    nice_levels,
    quiet_change,
    shared_levels,
    variable,
    variable_levels,
    variables_in,
)
from explorer.map_window import (  # noqa: F401 - re-exported
    AXIS_WORDS,
    MARKER_LAYERS,
    _axis_value,
    _match,
    _with_side_ticks,
    broken_limits,
    carbon_forms,
    carbon_margin,
    carbon_words,
    design_coordinates,
    exact_window_polygons,
    infeasibility,
    marker_layers,
    outlet_carbon_margin,
    reference_carbon_layers,
    scenario_markers,
    window_layers,
)
