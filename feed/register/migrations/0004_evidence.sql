-- Version 4: what the register needs to rank its evidence. An assay value below the lab's
-- detection limit keeps its limit (the stored wt% is then the middle of 0..limit); an assay keeps
-- the moisture of its sample; a weighing says whether the mass was wet or dry and its moisture,
-- and may carry its own uncertainty; each metal keeps its payable value so that the lot can be
-- revalued on what was measured.
ALTER TABLE assay_values ADD COLUMN censored INTEGER NOT NULL DEFAULT 0 CHECK (censored IN (0, 1));
ALTER TABLE assay_values ADD COLUMN limit_wt_pct REAL;              -- detection limit; NULL unless censored
ALTER TABLE assays ADD COLUMN moisture_wt_pct REAL                  -- of the wet sample; NULL: not given
    CHECK (moisture_wt_pct IS NULL OR (moisture_wt_pct >= 0 AND moisture_wt_pct < 100));
ALTER TABLE assays ADD COLUMN moisture_sigma_wt_pct REAL;
ALTER TABLE weighings ADD COLUMN state TEXT NOT NULL DEFAULT ''     -- '' (not said), 'wet' or 'dry'
    CHECK (state IN ('', 'wet', 'dry'));
ALTER TABLE weighings ADD COLUMN moisture_wt_pct REAL               -- of the wet mass; NULL: not given
    CHECK (moisture_wt_pct IS NULL OR (moisture_wt_pct >= 0 AND moisture_wt_pct < 100));
ALTER TABLE weighings ADD COLUMN sigma_kg REAL CHECK (sigma_kg IS NULL OR sigma_kg >= 0);
ALTER TABLE lot_metals ADD COLUMN payable_value REAL;               -- P50 at the lot's prices; NULL unpriced
UPDATE lot_metals SET payable_value = (
    SELECT json_extract(e.value, '$.payable_value.p50')
    FROM lots l, json_each(CASE WHEN json_valid(l.report_json) THEN l.report_json ELSE '{}' END, '$.value.elements') e
    WHERE l.lot_id = lot_metals.lot_id AND l.version = lot_metals.version
      AND json_extract(e.value, '$.element') = lot_metals.element);
