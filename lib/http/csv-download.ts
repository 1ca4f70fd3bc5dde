/**
 * A CSV file handed out as a download (RFC 4180 text, UTF-8; RFC 6266 attachment with its file name), with any
 * further headers: what every CSV route of the API answers.
 */
export function csvDownload(body: BodyInit, fileName: string, headers: Record<string, string> = {}): Response {
  return new Response(body, {
    headers: { 'Content-Type': 'text/csv; charset=utf-8', 'Content-Disposition': `attachment; filename="${fileName}"`, ...headers },
  });
}
