// What the app layer composes from the report feature.
export { CaseReport, REPORT_CAUTIONS } from "./components/case-report";
export { TraceFigure } from "./components/trace-figure";
export { useReport } from "./api/get-report";
