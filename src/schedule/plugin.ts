/**
 * The weekly refresh as part of the running service: the schedule starts when the application
 * is ready (a bad cron expression then stops the start-up) and stops, waiting for a run in
 * progress, when the application closes.
 */
import type { FastifyPluginAsync } from 'fastify';
import type { ReportDependencies } from '../report/snapshot/index.js';
import { startRefreshSchedule, type RefreshSchedule, type ScheduleSettings } from './weekly.js';

export interface RefreshSchedulePluginOptions extends ScheduleSettings {
  reports: ReportDependencies;
}

export const refreshSchedulePlugin: FastifyPluginAsync<RefreshSchedulePluginOptions> = async (app, { reports, ...settings }) => {
  let schedule: RefreshSchedule | null = null;
  app.addHook('onReady', async () => {
    schedule = startRefreshSchedule(reports, settings);
  });
  app.addHook('onClose', async () => {
    await schedule?.stop();
  });
};
