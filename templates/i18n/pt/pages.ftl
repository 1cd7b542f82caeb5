# Mensagens das páginas do servidor (ver en/pages.ftl).

## Layout
menu-main = Principal
menu-events = Eventos
menu-import = Importar
menu-trips = Viagens
menu-station = Envio na base
menu-dashboard = Painel
menu-disputes = Divergências
signed-in-as = Conectado como
log-out = Sair
not-signed-in = Não conectado
language-switch = Idioma
language-switch-button = Mudar

## Avisos de segurança
footer-safety-title = Segurança em primeiro lugar
footer-safety-approach = Não se aproxime de desmatamento em andamento, de máquinas nem de pessoas armadas.
footer-safety-approach-more = Observe de uma distância segura, anote o que puder e saia. "Não alcançado: segurança" é um bom relatório.
footer-safety-protocol = Siga o protocolo de segurança da sua organização e a lei local (autorizações, acesso à terra, plano de viagem, horários de contato).
footer-safety-consent = Fotos de pessoas precisam do consentimento delas. Fotografe a terra, não as pessoas.
footer-safety-evidence = Provas para processos judiciais seguem as regras locais e a prática de profissionais habilitados. O Groundproof guarda as fotos sem alteração e identificadas pelo conteúdo, mas não é um sistema de cadeia de custódia.
footer-safety-sensitive = Pacotes e retornos contêm locais de atividade possivelmente ilegal: trate-os como sigilosos.

## Entrar
login-title = Entrar
login-intro = Entre para acompanhar os alertas de desmatamento.
login-name = Nome de usuário
login-password = Senha
login-button = Entrar
login-note = O trabalho de campo pode ser perigoso: não se aproxime de operações em andamento nem de pessoas armadas, e siga o protocolo de segurança da sua organização e a lei local.
login-bad-credentials = Esse nome de usuário e essa senha não conferem.
login-locked = Tentativas erradas demais: espere 15 minutos e tente de novo.
login-failed = Não foi possível entrar; veja o registro do servidor.
login-session-ended = Sua sessão terminou (o tempo acabou, ou você saiu em outro lugar). Entre de novo; o que você enviou por último não foi salvo.

## Página de erro
error-back = Volte à página de onde veio, ou para
error-start-page = a página inicial

## Importar
import-title = Importar
import-nothing = Nada foi importado
import-imported-as = { $file } importado como { $source }
import-rows-read = linhas lidas
import-alerts = alertas importados
import-duplicates = duplicados descartados
import-skipped = linhas inválidas ignoradas
import-events-created = eventos criados
import-events-grown = eventos ampliados
import-events-merged = eventos unidos
import-skipped-rows = Linhas ignoradas
import-warnings = Avisos
import-see-events = Ver os eventos
import-zones-done = Zonas importadas
import-zones-summary = Zonas: { $zones }. Eventos ligados de novo às suas zonas: { $relinked }.
import-alert-file = Arquivo de alertas
import-alert-hint = CSV (linha de cabeçalho, vírgula ou ponto e vírgula) ou pontos GeoJSON. No máximo { $limit }. Um arquivo com qualquer erro não importa nada, a não ser que você ignore as linhas inválidas.
import-no-source = Ainda não há fonte de alertas registrada. Registre uma primeiro:
import-registered = Registradas: { $sizes }.
import-source = Fonte
import-choose = escolha…
import-format = Formato
import-format-auto = detectar pelo arquivo
import-threshold = Limite de confiança
import-threshold-hint = (só para confiança numérica)
import-file = Arquivo
import-skip-invalid = Ignorar linhas inválidas (importar as válidas e listar as outras)
import-alerts-button = Importar alertas
import-zone-file = Arquivo de zonas
import-zone-hint = FeatureCollection GeoJSON de feições Polygon ou MultiPolygon com um texto "name" e, opcionalmente, um booleano "priority". Uma zona com um nome já guardado é substituída. No máximo { $limit }.
import-zones-button = Importar zonas

## Parear um celular
pair-page-title = Parear um celular
pair-page-bundle = Pacote { $id } para { $team }, prazo { $due }.
pair-another = Outro código
pair-back = Voltar às viagens
pair-back-trip = Voltar à viagem
pairing-title = Colocar esta viagem em um celular
pairing-qr-label = Código QR que abre o aplicativo de campo com esta viagem
pairing-scan = No celular da equipe, leia o código com a câmera, ou abra o aplicativo de campo e digite este código:
pairing-open-app = Abrir o aplicativo de campo
pairing-once = O código funciona uma vez, para um celular, até { $expires }. Faça outro para cada celular. O celular passa a ter locais de atividade possivelmente ilegal: trate-o como sigiloso.

# --- station, station entry, report cards, field sheet ---
sheet-title = Ficha de campo
sheet-safety-title = Segurança em primeiro lugar
sheet-safety-approach = Não se aproxime de operações em andamento (máquinas, derrubada, queimada, garimpo) nem de pessoas armadas. Se encontrá-las, saia em silêncio; nenhuma foto ou registro vale o risco.
sheet-safety-protocol = Siga sempre o protocolo de segurança da sua organização e a lei local.
sheet-safety-consent = Fotos de pessoas precisam do consentimento delas. Sem ele, fotografe o terreno, não a pessoa.
sheet-safety-evidence = O tratamento de provas para processos segue as regras locais e a prática habilitada. Seus relatos e fotos são observações de campo; quem os encaminha como prova são as pessoas habilitadas para isso.
sheet-sensitive = Sigiloso:
sheet-sensitive-text = esta ficha mostra locais de atividade possivelmente ilegal. Mantenha-a com você, não a compartilhe e destrua-a depois da viagem.
sheet-team = Equipe
sheet-sheet = Ficha
sheet-bundle = Pacote
sheet-issued = Emitido
sheet-back-by = Voltar até
sheet-expires = Expira
sheet-kind = Tipo
sheet-mode-response = resposta
sheet-mode-assessment = avaliação
sheet-seed = semente da amostra { $seed }
sheet-checklist = Lista de verificação
sheet-checklist-version = versão { $version }
sheet-stops = Paradas
sheet-stops-count = { $events } eventos, { $controls } pontos de controle
sheet-paper-help = Com esta ficha e uma câmera: em cada parada, marque o resultado, anote a posição observada, a hora, os números das fotos tiradas ali e quem observou; a estação lança a ficha com as fotos da câmera (ficha { $sheet }).
sheet-assessment = Viagem de avaliação:
sheet-assessment-text = visite todas as paradas, mesmo as que parecem sem nada; pular paradas distorce os resultados.
sheet-route-title = Partida e rota
sheet-start = Partida: { $name }
sheet-stop = Parada
sheet-code = Código
sheet-leg = Distância do trecho (km)
sheet-total = Total
sheet-straight = As distâncias dos trechos são linhas retas entre as paradas, não distâncias a pé.
sheet-legend = Legenda do mapa
sheet-legend-pixels = pixels de alerta de { $source }
sheet-legend-footprint = contorno cinza: área do evento
sheet-legend-cross = cruz preta: ponto para onde caminhar (centroide)
sheet-events = Eventos ({ $n })
sheet-stop-n = Parada { $n }
sheet-corroborated = confirmado por outra fonte
sheet-area = Área
sheet-detected = Detectado
sheet-dates = { $first } a { $last }
sheet-sources = Fontes
sheet-stratum = Estrato
sheet-preview-alt = Prévia de { $code }: área, pixels de alerta, centroide, seta do norte e escala
sheet-no-preview = Sem prévia.
sheet-north = Norte para cima; cruz preta: centroide.
sheet-outcome = Resultado
sheet-if-false-alarm = Se alarme falso
sheet-if-not-reached = Se não alcançado
sheet-if-confirmed-cause = Se confirmado, causa
sheet-photos-taken = fotos tiradas (mín. { $min })
sheet-position-recorded = posição registrada
sheet-notes = Observações:
sheet-controls = Pontos de controle ({ $n })
sheet-controls-help = Sem alerta aqui: procure desmatamento que os alertas possam ter perdido e relate o que vir.
sheet-gps-name = No GPS:
sheet-if-clearing-cause = Se encontrou desmatamento, causa
sheet-if-clearing-area = Se encontrou desmatamento, área estimada:
sheet-pos-dd = Lat, lon (GD, WGS 84)
sheet-pos-utm = UTM (metros, truncados: o quadrado de 1 m onde fica o ponto)
sheet-pos-mgrs = MGRS (1 m, truncado como o UTM)
sheet-zone = fuso
sheet-hemisphere-north = norte
sheet-hemisphere-south = sul
sheet-outside-utm = fora da faixa UTM
sheet-outside-mgrs = fora da faixa UTM/MGRS
sheet-observed-position = Posição observada (lat, lon)
sheet-date-time = Data e hora (local)
sheet-photo-numbers = Números das fotos
sheet-observer = Observador
