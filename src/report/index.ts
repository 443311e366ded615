export { renderReport, CAUTION } from './renderReport.ts';
