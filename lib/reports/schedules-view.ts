/** A schedule as the reports page and the API carry it. */
export interface ReportScheduleView {
  id: number;
  name: string;
  site: string;
  cadence: string;
  recipients: string[];
  active: boolean;
  createdAt: string;
  updatedAt: string;
}
