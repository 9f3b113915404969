/**
 * Based on: the finding kinds of the report (DESIGN.md, Report) and the gates they trip.
 * One line of advice per kind, as the HTML report and the README show them: what it means
 * and what to do about it in the modelling tool. Our own wording.
 */

/** The advice line of each finding kind, by gate name. */
export const ADVICE: Record<string, string> = {
  'degenerate-uv':
    'UVs of these triangles collapse to a line or a point, so they give no tangent direction and smear the normal map: unwrap them again or move the collapsed UVs apart.',
  'degenerate-geometry':
    'These triangles have no area (corners on one line or on one point) and shade unpredictably: merge the coincident vertices and dissolve the degenerate faces.',
  'invalid-values':
    'NaN or infinite values break every renderer: re-export the model, and find the modifier or exporter step that writes them.',
  'bad-normals':
    'Zero, non-unit or flipped normals light the surface wrongly: recalculate the normals outward and check for faces with inverted winding.',
  'uv-overlap':
    'Triangles that partly overlap in UV share texels, so one baked map cannot suit both: pack the shells apart, or lay copies exactly on one another if they are meant to share.',
  'tangent-mismatch':
    'Stored tangents differ from the standard method, so maps baked against MikkTSpace show seams and wrong relief: export MikkTSpace tangents of the triangulated mesh, or run tanframe bake.',
  'missing-tangents':
    'A normal-mapped primitive stores no TANGENT, so every renderer makes up its own: export tangents, or run tanframe bake.',
  unchecked:
    'Nothing in the file could be checked (each primitive says why): check --uv and --all-primitives, or that the file holds triangles with texture coordinates.',
};

/** The line that says what notes are (mirrored triangles, stacked shells). */
export const NOTES_ADVICE =
  'Mirrored triangles and UV shells stacked exactly on one another are deliberate layouts, not problems: tanframe splits the frames on mirror seams; nothing to do unless the layout was not meant.';
