/** The SWR keys of a run's results that the run view starts early and the results view reads (SWR shares them). */
export const layoutKey = (runId: string) => `/api/runs/${runId}/results?view=layout`;
export const pointKey = (runId: string, point: number) =>
  `/api/runs/${runId}/results?view=point&point=${point}&format=binary`;
/** The run's series, numbers at 7 significant digits (everything on the page shows 4). */
export const seriesKey = (runId: string) => `/api/runs/${runId}/results?view=series&digits=7`;
