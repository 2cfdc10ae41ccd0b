/**
 * The calibration sections `npm run calibrate` runs, in order. A section is a named
 * simulation with known truth that measures some decision rules (see section.ts); add one by
 * appending it here.
 */
import type { CalibrationSection } from './section.js';
import { campaignSection } from './campaigns.js';
import { changeSection } from './changes.js';
import { expectedRateSection, valueTestSection } from './expected-sections.js';
import { holdoutAdviceSection } from './holdout-advice.js';
import { verdictSection } from './verdicts.js';

export type { CalibrationFigure, CalibrationOptions, CalibrationSection, SectionResult } from './section.js';

export const SECTIONS: CalibrationSection[] = [verdictSection, changeSection, campaignSection, expectedRateSection, valueTestSection, holdoutAdviceSection];
