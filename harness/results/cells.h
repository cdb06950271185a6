/* cells.h: where a sweep folder keeps its cells.
 *
 *     DIR/cells/ID/result.json    a finished cell (written last, atomically)
 *
 * The results module owns these paths: the sweep runner, merge, summary and
 * the report all ask here, so a change of layout is one edit.
 */
#ifndef RV_RESULTS_CELLS_H
#define RV_RESULTS_CELLS_H

/* 1 when DIR/cells/ID/result.json exists and is a regular file. */
int results_cell_done(const char *sweep_dir, const char *id);

#endif
