package dev.interim.embedded;

import java.io.IOException;
import java.io.UncheckedIOException;
import java.net.InetAddress;
import java.net.ServerSocket;

/**
 * Free TCP ports on 127.0.0.1, found by binding them (or port 0) and releasing them. Another
 * process may take such a port before the broker binds it; {@link EmbeddedKafka#start} then tries
 * again.
 */
final class FreePorts {
    /** "Choose a free port": the value a caller passes for no fixed port. */
    static final int ANY = 0;

    private FreePorts() {
    }

    /**
     * One free port for each entry of {@code preferred}: that port if it can be bound, otherwise
     * any free one ({@link #ANY} prefers none). All are held open together while choosing, so they
     * differ.
     */
    static int[] pick(int... preferred) {
        ServerSocket[] sockets = new ServerSocket[preferred.length];
        try {
            InetAddress loopback = InetAddress.getByName(BrokerSettings.HOST);
            int[] ports = new int[preferred.length];
            for (int i = 0; i < preferred.length; i++) {
                sockets[i] = bind(preferred[i], loopback);
                ports[i] = sockets[i].getLocalPort();
            }
            return ports;
        } catch (IOException e) {
            throw new UncheckedIOException("cannot find a free port on " + BrokerSettings.HOST, e);
        } finally {
            for (ServerSocket socket : sockets) {
                closeQuietly(socket);
            }
        }
    }

    private static ServerSocket bind(int preferred, InetAddress address) throws IOException {
        if (preferred != ANY) {
            try {
                return new ServerSocket(preferred, 1, address);
            } catch (IOException taken) {
                // Fall through to any free port.
            }
        }
        return new ServerSocket(ANY, 1, address);
    }

    private static void closeQuietly(ServerSocket socket) {
        if (socket != null) {
            try {
                socket.close();
            } catch (IOException ignored) {
                // Nothing to do: the port is released either way when the socket is collected.
            }
        }
    }
}
