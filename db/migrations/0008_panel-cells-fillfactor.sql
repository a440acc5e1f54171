-- panel_cells pages keep half their space free, so that a newer release's upsert of a cell can
-- write the new row version on the same page (a heap-only update: no new index entry).
ALTER TABLE "panel_cells" SET (fillfactor = 50);
