import { createContext, useContext } from "react";

// The Content-Security-Policy nonce of the document being rendered (set by entry.server.tsx). In the browser
// there is none: the inline scripts it guards run only from the server's HTML.
export const NonceContext = createContext<string | undefined>(undefined);

export const useNonce = () => useContext(NonceContext);
