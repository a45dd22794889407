package constants

// Names of the files in an output folder: the stages write them under these
// names and the readers (the chain, the reports, the nightly summaries) look
// for them under the same ones. They are stable: users and scripts rely on
// them.
const (
	// LinesFile is the assigned line list (assign), input of fit.
	LinesFile = "lines.csv"
	// UnassignedFile lists the peaks assign left unassigned.
	UnassignedFile = "unassigned.csv"
	// AssignReportFile is assign's summary.
	AssignReportFile = "assign.md"
	// AssignConstantsFile is, inside a chain's output folder, the record of the
	// assignment stage's internal fit (the chain's ConstantsFile is the fit
	// stage's).
	AssignConstantsFile = "assign-constants.json"
	// ConstantsFile is the constants record (fit).
	ConstantsFile = "constants.json"
	// ResidualsFile lists every line with o − c (fit).
	ResidualsFile = "residuals.csv"
	// FitReportFile is fit's summary.
	FitReportFile = "fit.md"
	// ThermoCSVFile and ThermoJSONFile are the thermodynamic table (thermo).
	ThermoCSVFile  = "thermo.csv"
	ThermoJSONFile = "thermo.json"
	// NASA7File holds the NASA 7-coefficient polynomials (thermo).
	NASA7File = "nasa7.json"
	// ReportHTMLFile and ReportMarkdownFile are the reports of a folder.
	ReportHTMLFile     = "report.html"
	ReportMarkdownFile = "report.md"
)

// ThermoHeading begins the first comment line of thermo.csv, followed by the
// isotopologue the table is for (a fit of several gives the table of one);
// the report reads the isotopologue from it.
const ThermoHeading = "bandwright thermo: ideal-gas partition function and thermodynamic functions of "
