import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { useFonts } from 'expo-font';
import { Stack } from 'expo-router';
import { useState } from 'react';
import { ActivityIndicator, View } from 'react-native';
import { colours, fontFiles } from '../components/theme';

/** Root: shipped fonts, the query client, then the routes. */
export default function RootLayout() {
  const [loaded, error] = useFonts(fontFiles);
  const [client] = useState(() => new QueryClient({ defaultOptions: { queries: { retry: 1, staleTime: 5_000 } } }));
  if (!loaded && !error) {
    return (
      <View style={{ flex: 1, alignItems: 'center', justifyContent: 'center', backgroundColor: colours.paper }}>
        <ActivityIndicator color={colours.ink} />
      </View>
    );
  }
  return (
    <QueryClientProvider client={client}>
      <Stack screenOptions={{ headerShown: false, contentStyle: { backgroundColor: colours.paper } }} />
    </QueryClientProvider>
  );
}
