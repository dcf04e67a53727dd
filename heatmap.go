package main

import (
	"path/filepath"

	"riskgrid/reports"
	"riskgrid/runner"
)

// heatMapDir is the subfolder of a result folder that holds the heat maps.
const heatMapDir = "figures"

// writeHeatMaps draws the heat maps of a two-axis result into
// dir/figures, each as SVG and PNG, and returns them (for the report
// page); a one-axis result has none.
func writeHeatMaps(dir string, res *runner.Result) ([]reports.HeatMap, error) {
	maps, err := reports.HeatMaps(res)
	if err != nil {
		return nil, err
	}
	for _, m := range maps {
		for _, f := range []struct {
			ext string
			b   []byte
		}{{".svg", m.SVG}, {".png", m.PNG}} {
			if err := runner.WriteFile(filepath.Join(dir, heatMapDir, m.Name+f.ext), f.b); err != nil {
				return nil, err
			}
		}
	}
	return maps, nil
}
