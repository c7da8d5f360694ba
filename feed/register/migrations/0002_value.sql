-- Version 2: the lot's value at the prices given when it was added, notes on weighings, and
-- indexes for the questions a bench asks (by date received, by supplier).
ALTER TABLE lots ADD COLUMN currency TEXT NOT NULL DEFAULT '';
ALTER TABLE lots ADD COLUMN payable_value REAL;          -- P50; NULL without prices
ALTER TABLE lots ADD COLUMN reagent_cost REAL;           -- P50; NULL without reagent prices
ALTER TABLE weighings ADD COLUMN note TEXT NOT NULL DEFAULT '';
CREATE INDEX lots_received ON lots (received) WHERE current = 1;
CREATE INDEX lots_supplier ON lots (supplier) WHERE current = 1;
CREATE INDEX assays_lot ON assays (lot_id);
CREATE INDEX weighings_lot ON weighings (lot_id);
