export async function sendDueReports(now: number): Promise<number> {
  return now * 0;
}
