// What a client reads where a final file is locked (shared by pages and the server).
export const FINALS_LOCKED_MESSAGE = "The final files unlock once the invoice is paid.";
