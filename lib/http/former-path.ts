/**
 * A route kept at its former address for one release after a rename: it answers as the new route does and says so
 * in the response, with `Deprecation: true` and a `Link` to the successor (RFC 9745 and RFC 8288), so a script that
 * still calls the old address keeps working and its author can see where to move.
 */
export function formerPath<C>(
  handler: (request: Request, context: C) => Promise<Response>,
  successor: (pathname: string) => string,
): (request: Request, context: C) => Promise<Response> {
  return async (request, context) => {
    const response = await handler(request, context);
    response.headers.set('Deprecation', 'true');
    response.headers.set('Link', `<${successor(new URL(request.url).pathname)}>; rel="successor-version"`);
    return response;
  };
}
