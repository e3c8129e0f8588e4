/**
 * The report's sections, in page order. A section appears when its
 * `applies` finds what it needs in the run folder; to add one, write a file
 * beside these and list it here (see DEVELOPERS.md).
 */
import type { Section } from '../section.js';
import { header } from './header.js';
import { glance } from './glance.js';
import { cautions } from './cautions.js';
import { modelRecovery } from './modelRecovery.js';
import { trialSweep } from './trialSweep.js';
import { sizingSection } from './sizing.js';
import { parameterRecovery } from './parameterRecovery.js';
import { tradeoffs } from './tradeoffs.js';
import { designVariants } from './designVariants.js';
import { observerPreview } from './observerPreview.js';
import { methods } from './methods.js';
import { about } from './about.js';
import { groupPlan } from './groupPlan.js';
import { fitHeader } from './fitHeader.js';
import { fitCautions } from './fitCautions.js';
import { fitGroup } from './fitGroup.js';
import { fitParticipants } from './fitParticipants.js';
import { fitRecovery } from './fitRecovery.js';
import { fitPredictive } from './fitPredictive.js';
import { fitMethods } from './fitMethods.js';
import { fitFiles } from './fitFiles.js';

export const SECTIONS: readonly Section[] = [header, glance, cautions, groupPlan, modelRecovery, trialSweep, sizingSection, designVariants, parameterRecovery, tradeoffs, observerPreview, methods, about,
  // A fit folder (lossprobe fit): the recovery sections above do not apply to it.
  fitHeader, fitGroup, fitCautions, fitParticipants, fitRecovery, fitPredictive, fitMethods, fitFiles];
