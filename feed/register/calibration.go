package register

import (
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"time"

	"blackmass/feed/calibrate"
)

// ErrNoCalibration is returned when the register holds no calibration (or not the one asked).
var ErrNoCalibration = errors.New("no such calibration in the register")

// SaveCalibration records a calibration under the next version number and returns it; the
// calibration is checked first and stored with that version. The caller's value is not changed.
func (r *Register) SaveCalibration(ctx context.Context, c *calibrate.Calibration) (int, error) {
	if err := c.Check(); err != nil {
		return 0, err
	}
	var version int
	err := r.tx(ctx, func(tx *sql.Tx) error {
		if err := tx.QueryRow("SELECT coalesce(max(version), 0) + 1 FROM calibrations").Scan(&version); err != nil {
			return err
		}
		saved := *c
		saved.Version = version
		body, err := json.Marshal(&saved)
		if err != nil {
			return err
		}
		if _, err := tx.Exec(`INSERT INTO calibrations (version, created_at, saved_at, method, lots, calibration)
			VALUES (?, ?, ?, ?, ?, ?)`, version, c.CreatedAt.UTC().Format(time.RFC3339), r.now().Format(time.RFC3339),
			c.Method, len(c.Lots), string(body)); err != nil {
			return err
		}
		detail := fmt.Sprintf("calibration %d from %d lots (%d left out)", version, len(c.Lots), len(c.LeftOut))
		return audit(tx, r.now(), "calibrate", "", detail)
	})
	if err != nil {
		return 0, fmt.Errorf("register %s: %w", r.path, err)
	}
	return version, nil
}

// LatestCalibration returns the calibration saved last.
func (r *Register) LatestCalibration(ctx context.Context) (*calibrate.Calibration, error) {
	return r.readCalibration(ctx, "SELECT version, calibration FROM calibrations ORDER BY version DESC LIMIT 1")
}

// Calibration returns the calibration saved as version.
func (r *Register) Calibration(ctx context.Context, version int) (*calibrate.Calibration, error) {
	return r.readCalibration(ctx, "SELECT version, calibration FROM calibrations WHERE version = ?", version)
}

func (r *Register) readCalibration(ctx context.Context, q string, args ...any) (*calibrate.Calibration, error) {
	var version int
	var body string
	err := r.db.QueryRowContext(ctx, q, args...).Scan(&version, &body)
	if errors.Is(err, sql.ErrNoRows) {
		if len(args) > 0 {
			return nil, fmt.Errorf("register %s: calibration %v: %w", r.path, args[0], ErrNoCalibration)
		}
		return nil, fmt.Errorf("register %s: %w", r.path, ErrNoCalibration)
	}
	if err != nil {
		return nil, fmt.Errorf("register %s: %w", r.path, err)
	}
	c := &calibrate.Calibration{}
	if err := json.Unmarshal([]byte(body), c); err != nil {
		return nil, fmt.Errorf("register %s: calibration %d: %w", r.path, version, err)
	}
	if err := c.Check(); err != nil {
		return nil, fmt.Errorf("register %s: calibration %d: %w", r.path, version, err)
	}
	if c.Version != version {
		return nil, fmt.Errorf("register %s: calibration %d records itself as version %d", r.path, version, c.Version)
	}
	return c, nil
}
